/**
 * "Use as parameter" on a fit card: which fitted values can be taken over, and the parameter cell (new) or the fields
 * (existing) that hold one, converted into the parameter's own unit. A value only goes into a parameter of the same
 * dimension: an energy never becomes a wavelength by the back door.
 */
import type { Cell, FitCell, ParameterCell, SheetCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'
import { parseUnit } from '../../../shared/engine/units'
import { dimEquals, dimName } from '../../../shared/engine/dimensions'
import { isEnergyUnit } from '../../../shared/plot/units'
import { formatNumber } from '../../../shared/plot/format'
import { valueWithError } from './fitReport'

export interface TakeableOutput {
  key: string
  value: number
  err?: number
  /** The unit `value` is in ('' for none). */
  unit: string
}

const NOT_PARAMETERS = new Set(['r2', 'n', 'chi2', 'reducedChi2', 'iterations', 'B'])

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v)
}

/** The fitted values of a fit result worth writing into a parameter, each in the unit the card shows it in. */
export function takeableOutputs(cell: FitCell, result: CellResult | undefined, unitOf: (name: string) => string | undefined): TakeableOutput[] {
  const v = result?.status === 'ok' ? result.value : undefined
  if (!isRecord(v)) return []
  const fitUnit = result?.unit ?? cell.unit ?? 'eV'
  const out: TakeableOutput[] = []
  for (const [key, raw] of Object.entries(v)) {
    if (typeof raw !== 'number' || !Number.isFinite(raw) || key.endsWith('_err') || NOT_PARAMETERS.has(key)) continue
    const err = typeof v[`${key}_err`] === 'number' ? (v[`${key}_err`] as number) : undefined
    if (cell.method === 'model') {
      if (err === undefined) continue
      const own = unitOf(key) ?? ''
      out.push({ key, value: raw, err, unit: cell.unit && isEnergyUnit(own) ? cell.unit : own })
    } else if (key === 'alpha0') out.push({ key, value: raw / 100, unit: '1/cm' }) // SI 1/m in the result
    else out.push({ key, value: raw, err, unit: fitUnit })
  }
  return out
}

export type TakeStep =
  | { ok: true; cell: Cell; fields?: undefined; said: string }
  | { ok: true; cell?: undefined; fields: Record<string, unknown>; said: string }
  | { ok: false; message: string }

function unitText(u: string): string {
  return u ? ` ${u}` : ''
}

/**
 * A parameter cell holding `out` (named `<key>_<fit>`, free among `cells`), or, for an existing parameter, its new
 * `value` in that parameter's unit. The new cell's description records where the value came from.
 */
export function parameterFromFit(fit: FitCell, out: TakeableOutput, target: ParameterCell | undefined, cells: readonly SheetCell[]): TakeStep {
  const window = fit.from !== undefined && fit.to !== undefined ? `, window ${formatNumber(fit.from, 5)}–${formatNumber(fit.to, 5)}` : ''
  const shown = `${valueWithError(out.value, out.err)}${unitText(out.unit)}`
  if (!target) {
    const used = new Set(cells.map((c) => c.name).filter(Boolean))
    const stem = `${out.key}_${fit.name}`.replace(/[^A-Za-z0-9_]/g, '_').slice(0, 60)
    let name = stem
    for (let i = 2; used.has(name); i++) name = `${stem}_${i}`
    return {
      ok: true,
      cell: { kind: 'parameter', name, value: out.value, ...(out.unit ? { unit: out.unit } : {}), description: `${out.key} = ${shown} from the fit ${fit.name}${window}` },
      said: `${name} = ${formatNumber(out.value, 6)}${unitText(out.unit)} added below the fit.`,
    }
  }
  const from = parseUnit(out.unit)
  const to = parseUnit(target.unit ?? '')
  if (!from.ok || !to.ok) return { ok: false, message: `The unit of ${!from.ok ? out.key : target.name} is not one Penumbra knows, so ${out.key} cannot be converted.` }
  if (!dimEquals(from.dim, to.dim))
    return {
      ok: false,
      message: `${out.key} is ${dimName(from.dim)}${unitText(out.unit)} but ${target.name} is ${dimName(to.dim)}${unitText(target.unit ?? '')}; choose a parameter of the same kind, or a new one.`,
    }
  const value = (out.value * from.factor) / to.factor
  return { ok: true, fields: { value }, said: `${target.name} = ${formatNumber(value, 6)}${unitText(target.unit ?? '')} (${out.key} from the fit ${fit.name}).` }
}
