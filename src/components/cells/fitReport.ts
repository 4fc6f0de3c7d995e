/**
 * A fit cell's result as people read it: rows of value ± standard error with units, and the usual cautions when a
 * Tauc window or an Urbach fit looks outside its usual validity. Modelling results are not measurements; these notes
 * say where the model's assumptions are likely strained, they do not judge the data.
 */
import type { FitCell, SheetCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'
import { converter, isEnergyUnit } from '../../../shared/plot/units'
import { formatNumber, formatWithError } from '../../../shared/plot/format'
import { prettyUnit } from './resultFormat'

export interface FitRow {
  quantity: string
  /** What the quantity is, in words. */
  meaning: string
  value: string
  unit: string
}

const ENERGY_KEYS = new Set(['Eg', 'Eu', 'E0'])

/** A standard error below this fraction of the value is floating-point noise of an exact fit. */
const EXACT_RELATIVE = 1e-9

/**
 * A value with its standard error, the error to two significant figures; very large or small values share one
 * power of ten: `(6.724 ± 0.0095)e-6` reads better than a row of zeros.
 */
export function valueWithError(x: number, err: number | undefined): string {
  if (err === undefined || !Number.isFinite(err) || err <= 0 || !Number.isFinite(x)) return formatNumber(x, 5)
  const a = Math.abs(x)
  // data that lie exactly on the model (a sheet fitting its own formula): the error is rounding noise, not a spread
  if (err < a * EXACT_RELATIVE) return `${formatNumber(x, 6)} ± 0 (exact fit)`
  if (a !== 0 && (a >= 1e5 || a < 1e-3)) {
    const exp = Math.floor(Math.log10(a))
    const m = x / 10 ** exp
    const me = err / 10 ** exp
    const d = Math.min(8, Math.max(0, 1 - Math.floor(Math.log10(me))))
    return `(${m.toFixed(d)} ± ${me.toFixed(d)})e${exp}`
  }
  return formatWithError(x, err)
}

const SUPERSCRIPT: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' }

/** `m`, -2 → "m⁻²"; `J`, -0.5 → "J^(−1/2)"; a power of 1 is the bare unit, a power of 0 nothing. */
function power(unit: string, p: number): string {
  if (p === 0) return ''
  if (p === 1) return unit
  if (Number.isInteger(p)) return unit + [...String(p)].map((ch) => SUPERSCRIPT[ch] ?? ch).join('')
  for (let den = 2; den <= 12; den++) {
    const num = Math.round(p * den)
    if (Math.abs(num / den - p) < 1e-9) return `${unit}^(${num < 0 ? '−' : ''}${Math.abs(num)}/${den})`
  }
  return `${unit}^${p}`
}

/**
 * The SI unit of a Tauc slope B, from (αE)^(1/r) = B·(E − Eg) with α in 1/m and E in J: J^(1/r − 1)·m^(−1/r).
 * r = 1/2 (direct allowed) gives "J·m⁻²", r = 2 (indirect allowed) "J^(−1/2)·m^(−1/2)".
 */
export function taucSlopeUnit(r: number): string {
  if (!Number.isFinite(r) || r <= 0) return ''
  const inv = 1 / r
  return [power('J', inv - 1), power('m', -inv)].filter(Boolean).join('·')
}

const MEANING: Record<string, string> = {
  Eg: 'band gap (intercept of the Tauc line)',
  B: 'slope of the Tauc line',
  Eu: 'Urbach energy (width of the exponential tail)',
  alpha0: 'α of the tail at E0',
  E0: 'reference energy of α₀ (top of the window)',
  r2: 'coefficient of determination',
  n: 'points in the window',
  chi2: 'sum of squared residuals',
  chi2Weighted: 'Σ((y − fit)/σ)², weighted by the σ cell',
  reducedChi2: 'χ² per degree of freedom',
  iterations: 'Levenberg–Marquardt steps taken',
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v)
}

/**
 * Rows for a fit result, each in the unit the result states for it (`units`); results of an older engine without
 * `units` fall back to: energies in the fit's unit, alpha0 SI (1/m, shown in 1/cm), B SI. For model fits, `<name>`
 * with `<name>_err`, or `params`/`errors` records, become one row per free parameter.
 */
export function fitRows(cell: FitCell, result: CellResult | undefined, unitOf: (name: string) => string | undefined): FitRow[] {
  const value = result?.status === 'ok' ? result.value : undefined
  if (!isRecord(value)) return []
  const rows: FitRow[] = []
  const fitUnit = cell.unit ?? 'eV'
  const used = new Set<string>()
  const numberAt = (rec: Record<string, unknown>, key: string) => (typeof rec[key] === 'number' ? (rec[key] as number) : undefined)

  const stated = result?.units
  // "1" marks a plain number in the result; the table leaves its unit empty
  const statedUnit = (key: string): string | undefined => (stated && key in stated ? (stated[key] === '1' ? '' : prettyUnit(stated[key])) : undefined)
  const push = (key: string, v: number, err: number | undefined, unit: string, meaning?: string) => {
    rows.push({ quantity: key, meaning: meaning ?? MEANING[key] ?? '', value: valueWithError(v, err), unit })
  }

  // nested parameter records from a model fit
  const params = isRecord(value.params) ? value.params : isRecord(value.parameters) ? value.parameters : null
  const errors = isRecord(value.errors) ? value.errors : isRecord(value.stderr) ? value.stderr : null
  if (params) {
    for (const [name, v] of Object.entries(params)) {
      if (typeof v !== 'number') continue
      const err = errors && typeof errors[name] === 'number' ? (errors[name] as number) : undefined
      push(name, v, err, unitOf(name) ?? '', 'fitted parameter')
    }
    used.add('params').add('parameters').add('errors').add('stderr')
  }

  const order = ['Eg', 'Eu', 'B', 'alpha0', 'E0']
  const keys = [...order.filter((k) => k in value), ...Object.keys(value).filter((k) => !order.includes(k))]
  for (const key of keys) {
    if (used.has(key) || key.endsWith('_err')) continue
    const v = numberAt(value, key)
    if (v === undefined) continue
    const err = numberAt(value, `${key}_err`)
    if (cell.method === 'model' && err !== undefined) {
      // a free parameter: shown in its own cell's unit, energies in the fit's unit when the fit sets one
      const own = unitOf(key) ?? ''
      push(key, v, err, statedUnit(key) ?? (cell.unit && isEnergyUnit(own) ? cell.unit : own), 'fitted parameter')
    } else if (key === 'r2') {
      rows.push({ quantity: 'R²', meaning: MEANING.r2, value: v.toFixed(5), unit: '' })
    } else if (key === 'n' || key === 'iterations') {
      rows.push({ quantity: key === 'n' ? 'points' : key, meaning: MEANING[key], value: String(v), unit: '' })
    } else if (key === 'alpha0') {
      const unit = statedUnit(key)
      if (unit !== undefined) push('α₀', v, err, unit, MEANING.alpha0)
      else push('α₀', v / 100, err !== undefined ? err / 100 : undefined, '1/cm', MEANING.alpha0)
    } else if (ENERGY_KEYS.has(key)) {
      push(key, v, err, statedUnit(key) ?? fitUnit)
    } else if (key === 'chi2' || key === 'reducedChi2') {
      const unit = statedUnit(key) ?? ''
      const meaning = key === 'chi2' && cell.sigma ? MEANING.chi2Weighted : MEANING[key]
      rows.push({ quantity: key === 'chi2' ? 'χ²' : 'reduced χ²', meaning, value: formatNumber(v), unit })
    } else {
      push(key, v, err, statedUnit(key) ?? (key === 'B' && cell.method === 'tauc' ? taucSlopeUnit(cell.r ?? 0.5) : ''))
    }
  }
  if (typeof value.converged === 'boolean' && !value.converged) {
    rows.push({ quantity: 'converged', meaning: 'the fit stopped before converging', value: 'no', unit: '' })
  }
  return rows
}

/** The residuals of a model fit, when the engine returns them. */
export function fitResiduals(result: CellResult | undefined): number[] | null {
  const value = result?.status === 'ok' ? result.value : undefined
  if (!isRecord(value) || !Array.isArray(value.residuals)) return null
  return value.residuals.map((v) => (typeof v === 'number' ? v : NaN))
}

/** The window in the fit's energy unit (sorted), when both ends are set and the x unit converts. */
function windowInFitUnit(cell: FitCell, xUnit: string | undefined): [number, number] | null {
  if (cell.from === undefined || cell.to === undefined) return null
  const c = converter(xUnit ?? cell.unit ?? 'eV', cell.unit ?? 'eV')
  if (!c.ok) return null
  const a = c.value(cell.from)
  const b = c.value(cell.to)
  if (!Number.isFinite(a) || !Number.isFinite(b)) return null
  return a <= b ? [a, b] : [b, a]
}

function toEv(v: number, unit: string | undefined): number | null {
  const c = converter(unit ?? 'eV', 'eV')
  return c.ok ? c.value(v) : null
}

/**
 * The cautions for a fit, as plain sentences. Thresholds are common practice, not a standard: a Tauc line is read on
 * the straight part just above the edge (R² well above 0.98, the window starting at or above the fitted gap and
 * reaching no more than a few tenths of an eV above it, enough points); an Urbach tail lies below the gap and is
 * typically 10–100 meV wide in semiconductor films.
 */
export function fitCautions(cell: FitCell, result: CellResult | undefined, cells: readonly SheetCell[], resultsById: Record<string, CellResult>): string[] {
  const value = result?.status === 'ok' ? result.value : undefined
  if (!isRecord(value)) return []
  const out: string[] = []
  const fitUnit = cell.unit ?? 'eV'
  const xCell = cells.find((c) => c.name === cell.x)
  const xUnit = xCell && 'unit' in xCell ? (xCell.unit as string | undefined) : undefined
  const win = windowInFitUnit(cell, xUnit)
  const r2 = typeof value.r2 === 'number' ? value.r2 : undefined
  const n = typeof value.n === 'number' ? value.n : undefined
  const fmt = (v: number) => `${formatNumber(v, 4)} ${fitUnit}`
  // the engine's own warnings show on the card already; a caution saying the same thing again is left out
  const engineSays = (pattern: RegExp) => (result?.warnings ?? []).some((w) => pattern.test(w))

  if (n !== undefined && n < 5) out.push(`Only ${n} points lie in the window; a line through so few points says little. Widen the window.`)

  if (cell.method === 'tauc' && typeof value.Eg === 'number') {
    const Eg = value.Eg
    if (r2 !== undefined && r2 < 0.98 && !engineSays(/tauc plot is not straight/i))
      out.push(`The Tauc plot is not straight in this window (R² = ${r2.toFixed(3)}), so the gap depends on where the window sits. Move it onto the straight part just above the edge.`)
    if (win && win[0] < Eg && !engineSays(/gap lies inside the window/i))
      out.push(`The window starts at ${fmt(win[0])}, below the fitted gap (${fmt(Eg)}). Points below the gap belong to the tail and bend the Tauc line; start the window above the gap.`)
    const EgEv = toEv(Eg, fitUnit)
    const topEv = win ? toEv(win[1], fitUnit) : null
    if (EgEv !== null && topEv !== null && topEv - EgEv > 0.5)
      out.push(`The window reaches ${formatNumber(topEv - EgEv, 2)} eV above the gap. The Tauc form assumes parabolic bands and holds only near the edge; keep the window within a few tenths of an eV of it.`)
    if (cell.r === undefined && !engineSays(/r is not given/i)) out.push('No Tauc exponent is set; the fit assumes r = 1/2 (direct allowed). Choose the transition type that fits the material.')
  }

  if (cell.method === 'urbach' && typeof value.Eu === 'number') {
    const EuEv = toEv(value.Eu, fitUnit)
    if (EuEv !== null && (EuEv < 0.005 || EuEv > 0.2))
      out.push(`An Urbach energy of ${formatNumber(EuEv * 1000, 3)} meV is unusual (films typically show about 10–100 meV). Check that the window lies on the exponential tail.`)
    if (r2 !== undefined && r2 < 0.98 && !engineSays(/ln α is not straight/i))
      out.push(`ln α is not straight in this window (R² = ${r2.toFixed(3)}): the tail is not a single exponential there.`)
    // a gap to compare with: a Tauc fit of the same data, else a parameter named Eg
    const tauc = cells.find((c) => c.kind === 'fit' && c.method === 'tauc' && c.y === cell.y)
    const taucValue = tauc ? resultsById[tauc.id]?.value : undefined
    let gapEv: number | null = null
    let gapFrom = ''
    if (tauc && isRecord(taucValue) && typeof taucValue.Eg === 'number') {
      gapEv = toEv(taucValue.Eg, (tauc as FitCell).unit ?? 'eV')
      gapFrom = `the Tauc fit ${tauc.name}`
    } else {
      const eg = cells.find((c) => c.kind === 'parameter' && c.name === 'Eg')
      if (eg && eg.kind === 'parameter') {
        gapEv = toEv(eg.value, eg.unit ?? 'eV')
        gapFrom = 'parameter Eg'
      }
    }
    const topEv = win ? toEv(win[1], fitUnit) : null
    if (gapEv !== null && topEv !== null && topEv > gapEv)
      out.push(`The window reaches ${formatNumber(topEv, 4)} eV, above the gap (${formatNumber(gapEv, 4)} eV from ${gapFrom}). An Urbach fit describes the tail below the gap only.`)
  }
  return out
}
