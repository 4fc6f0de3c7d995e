/**
 * Keeps a figure drawable in a browser without a GPU: a sweep of thousands of steps would give plotly thousands of
 * curves (seconds of drawing per change, the page frozen meanwhile) or a map of millions of cells. The picture
 * needs far fewer: curves evenly spread over the parameter (first and last kept, so the colour bar still spans the
 * whole sweep), and map rows evenly spread over it. The figure says in a plain sentence what was left out.
 *
 * Sweep results are thinned before the drawing model is built (building 2,000 curves only to drop most is itself
 * slow); `limitForDrawing` is the last guard on a finished model.
 */
import type { FigureModel } from '../../../shared/plot/figure'
import type { CellResult, SweepValue } from '../../../shared/schema/result'

/** Most curves of one sweep family drawn at once. */
export const MAX_FAMILY_CURVES = 60
/** Most parameter rows of a sweep map drawn at once. */
export const MAX_MAP_ROWS = 400

/** `count` indices spread evenly over 0…n−1, first and last included, in order. */
export function evenlySpread(n: number, count: number): number[] {
  if (n <= count) return Array.from({ length: n }, (_, i) => i)
  if (count <= 1) return [0]
  const out: number[] = []
  for (let k = 0; k < count; k++) {
    const i = Math.round((k * (n - 1)) / (count - 1))
    if (out[out.length - 1] !== i) out.push(i)
  }
  return out
}

export interface ThinnedSweep {
  result: CellResult | undefined
  /** Parameter steps in the sweep, and how many the thinned result keeps. */
  total: number
  kept: number
}

/**
 * A sweep result with at most `maxRows` parameter steps, evenly spread, when every output is an array per step (a
 * family or a map). Sweeps with scalar outputs are left whole: they draw as one curve against the parameter.
 */
export function thinSweepResult(result: CellResult | undefined, maxRows: number): ThinnedSweep {
  const value = result?.value as Partial<SweepValue> | undefined
  const parameter = Array.isArray(value?.parameter) ? value.parameter : null
  const outputs = value?.outputs && typeof value.outputs === 'object' ? value.outputs : null
  if (!result || result.status !== 'ok' || !parameter || !outputs) return { result, total: parameter?.length ?? 0, kept: parameter?.length ?? 0 }
  const total = parameter.length
  const rowsOf = Object.values(outputs)
  const arrays = rowsOf.length > 0 && rowsOf.every((rows) => Array.isArray(rows) && rows.length === total && rows.every((r) => Array.isArray(r)))
  if (total <= maxRows || !arrays) return { result, total, kept: total }
  const keep = evenlySpread(total, maxRows)
  const thinned: SweepValue = {
    parameter: keep.map((i) => parameter[i]),
    outputs: Object.fromEntries(Object.entries(outputs).map(([name, rows]) => [name, keep.map((i) => rows[i])])),
  }
  return { result: { ...result, value: thinned }, total, kept: keep.length }
}

/** The sentence a thinned figure carries, e.g. "60 of the 2,000 curves are drawn, evenly spread over d; …". */
export function thinningNote(view: 'curves' | 'map', kept: number, total: number, parameter: string): string {
  const all = total.toLocaleString('en')
  return view === 'map'
    ? `The map draws ${kept} of the ${all} steps of ${parameter || 'the sweep'}, evenly spread.`
    : `${kept} of the ${all} curves are drawn, evenly spread over ${parameter || 'the sweep'}; the map shows every step.`
}

/** The model with at most MAX_FAMILY_CURVES curves and MAX_MAP_ROWS map rows, and a sentence when it had to thin. */
export function limitForDrawing(model: FigureModel): FigureModel {
  const sweep = model.sweep
  if (sweep?.view === 'curves' && sweep.family.curves.length > MAX_FAMILY_CURVES) {
    const curves = sweep.family.curves
    const keep = evenlySpread(curves.length, MAX_FAMILY_CURVES).map((i) => curves[i])
    return {
      ...model,
      sweep: { ...sweep, family: { ...sweep.family, curves: keep } },
      messages: [...model.messages, thinningNote('curves', keep.length, curves.length, sweep.parameterLabel)],
    }
  }
  if (sweep?.view === 'map' && sweep.map.y.length > MAX_MAP_ROWS) {
    const m = sweep.map
    const rows = evenlySpread(m.y.length, MAX_MAP_ROWS)
    return {
      ...model,
      sweep: { ...sweep, map: { ...m, y: rows.map((i) => m.y[i]), z: rows.map((i) => m.z[i]) } },
      messages: [...model.messages, thinningNote('map', rows.length, m.y.length, '')],
    }
  }
  return model
}
