/**
 * Sweep results prepared for drawing: a family of curves (one per parameter value, against the x series the outputs
 * were computed on) or a map (rows = parameter values, columns = x), per DESIGN §6.
 */
import type { CellResult, SweepValue } from '../schema/result'
import { unusable, type Resolved } from './resolve'

export interface SweepOptions {
  /** Which output to draw; the first one when omitted. */
  output?: string
  /** The x series the outputs' rows are computed on (e.g. the photon-energy grid). */
  xValues?: readonly number[]
  xUnit?: string
}

export interface SweepCurve {
  /** The parameter value this curve belongs to, in the sweep's unit. */
  parameter: number
  x: number[]
  y: number[]
}

export interface SweepFamily {
  output: string
  outputs: string[]
  /** 'family': one curve per parameter value; 'single': scalar outputs, one curve of output against the parameter. */
  mode: 'family' | 'single'
  parameter: number[]
  parameterUnit: string
  curves: SweepCurve[]
  /** Unit of the curves' x: the x series' unit (family) or the sweep's unit (single). */
  xUnit: string
  /** A plain sentence when the drawing had to fall back (no x series, lengths differ). */
  note?: string
}

export interface SweepMap {
  output: string
  outputs: string[]
  x: number[]
  xUnit: string
  /** Parameter values (rows), in the sweep's unit. */
  y: number[]
  parameterUnit: string
  /** z[i][j]: output at parameter y[i] and x[j]. */
  z: number[][]
  note?: string
}

function isSweepValue(v: unknown): v is SweepValue {
  if (typeof v !== 'object' || v === null) return false
  const s = v as Partial<SweepValue>
  return Array.isArray(s.parameter) && typeof s.outputs === 'object' && s.outputs !== null
}

function rowNumbers(row: unknown): number[] | number | null {
  if (typeof row === 'number') return row
  if (Array.isArray(row)) return row.map((v) => (typeof v === 'number' ? v : NaN))
  return null
}

interface Rows {
  name: string
  outputs: string[]
  value: SweepValue
  rows: (number | number[] | null)[]
}

function pickRows(result: CellResult | undefined, name: string, output: string | undefined): Resolved<Rows> {
  const why = unusable(name, result)
  if (why || !result) return { ok: false, message: why ?? `There is no sweep named "${name}".` }
  if (result.kind !== 'sweep' || !isSweepValue(result.value)) return { ok: false, message: `Cell "${name}" is not a sweep.` }
  const value = result.value
  const outputs = Object.keys(value.outputs)
  if (outputs.length === 0) return { ok: false, message: `Sweep "${name}" has no outputs.` }
  const out = output ?? outputs[0]
  const rows = value.outputs[out]
  if (!rows) return { ok: false, message: `Sweep "${name}" has no output "${out}"; its outputs are ${outputs.join(', ')}.` }
  if (rows.length !== value.parameter.length)
    return { ok: false, message: `Sweep "${name}" gives ${rows.length} rows of "${out}" for ${value.parameter.length} parameter values.` }
  return { ok: true, value: { name: out, outputs, value, rows: rows.map(rowNumbers) } }
}

function xFor(n: number, opts: SweepOptions): { x: number[]; unit: string; note?: string } {
  if (opts.xValues && opts.xValues.length === n) return { x: [...opts.xValues], unit: opts.xUnit ?? '' }
  const x = Array.from({ length: n }, (_, i) => i)
  const note = opts.xValues
    ? `The x series has ${opts.xValues.length} values but each row has ${n}; drawn against point number instead.`
    : 'No x series was given; drawn against point number.'
  return { x, unit: '', note }
}

/** The sweep as curves. A sweep of scalar outputs gives one curve: output against the parameter. */
export function sweepFamily(result: CellResult | undefined, opts: SweepOptions = {}): Resolved<SweepFamily> {
  const name = result?.name ?? 'sweep'
  const picked = pickRows(result, name, opts.output)
  if (!picked.ok) return picked
  const { value, rows, outputs } = picked.value
  const parameterUnit = result?.unit ?? ''
  if (rows.every((r) => typeof r === 'number' || r === null)) {
    return {
      ok: true,
      value: {
        output: picked.value.name,
        outputs,
        mode: 'single',
        parameter: [...value.parameter],
        parameterUnit,
        curves: [{ parameter: NaN, x: [...value.parameter], y: rows.map((r) => (typeof r === 'number' ? r : NaN)) }],
        xUnit: parameterUnit,
      },
    }
  }
  const n = Math.max(...rows.map((r) => (Array.isArray(r) ? r.length : 0)))
  const xs = xFor(n, opts)
  const curves: SweepCurve[] = value.parameter.map((p, i) => {
    const r = rows[i]
    const y = Array.isArray(r) ? r : new Array<number>(n).fill(typeof r === 'number' ? r : NaN)
    return { parameter: p, x: xs.x, y }
  })
  return {
    ok: true,
    value: { output: picked.value.name, outputs, mode: 'family', parameter: [...value.parameter], parameterUnit, curves, xUnit: xs.unit, note: xs.note },
  }
}

/** The sweep as a map: rows are parameter values, columns the x series. Scalar outputs have no map. */
export function sweepMap(result: CellResult | undefined, opts: SweepOptions = {}): Resolved<SweepMap> {
  const name = result?.name ?? 'sweep'
  const picked = pickRows(result, name, opts.output)
  if (!picked.ok) return picked
  const { value, rows, outputs } = picked.value
  if (!rows.some((r) => Array.isArray(r)))
    return { ok: false, message: `Sweep output "${picked.value.name}" is one number per parameter value, so it is drawn as a curve, not a map.` }
  const n = Math.max(...rows.map((r) => (Array.isArray(r) ? r.length : 0)))
  const xs = xFor(n, opts)
  const z = rows.map((r) => {
    if (!Array.isArray(r)) return new Array<number>(n).fill(typeof r === 'number' ? r : NaN)
    if (r.length === n) return r
    return [...r, ...new Array<number>(n - r.length).fill(NaN)]
  })
  return {
    ok: true,
    value: { output: picked.value.name, outputs, x: xs.x, xUnit: xs.unit, y: [...value.parameter], parameterUnit: result?.unit ?? '', z, note: xs.note },
  }
}
