/**
 * Drawing models for the figures inside sweep and fit cards (the same model a figure cell gives, so one renderer
 * draws them all): a sweep result as curves or a map, and a Tauc or Urbach fit with its line and window.
 */
import type { CellResult, SweepValue } from '../schema/result'
import { buildFigure, type FigureModel } from './figure'
import { fitPlotData, type FitSpec, type WindowFit } from './fitplot'
import { formatWithError } from './format'
import { traceColor } from './palette'
import { prettyUnit } from './units'

export interface SweepFigureOptions {
  /** The grid the array outputs were computed on, and its unit and name. */
  xValues?: readonly number[]
  xUnit?: string
  xName?: string
  /** The swept parameter's name (for the legend and axis), e.g. "d". */
  parameterName?: string
  /** Output to draw; all scalar outputs sharing the first one's unit when omitted, else the first output. */
  output?: string
  /** Display unit of each output cell. */
  outputUnits?: Record<string, string>
  view?: 'curves' | 'map'
}

const X_REF = 'x_series'

/** The outputs a sweep result has, each marked scalar (one number per parameter value) or not. */
export function sweepOutputs(result: CellResult | undefined): { name: string; scalar: boolean }[] {
  const v = result?.value as Partial<SweepValue> | undefined
  if (!v || typeof v.outputs !== 'object' || v.outputs === null) return []
  return Object.entries(v.outputs).map(([name, rows]) => ({ name, scalar: Array.isArray(rows) && rows.every((r) => typeof r === 'number' || r === null) }))
}

/** A sweep result drawn on its own (the sweep card): family of curves, one curve per scalar output, or a map. */
export function sweepFigure(result: CellResult | undefined, opts: SweepFigureOptions = {}): FigureModel {
  const name = result?.name ?? 'sweep'
  const outputs = sweepOutputs(result)
  const units = opts.outputUnits ?? {}
  let chosen: string[]
  if (opts.output) chosen = [opts.output]
  else if (outputs.length && outputs[0].scalar) {
    const u = units[outputs[0].name] ?? ''
    chosen = outputs.filter((o) => o.scalar && (units[o.name] ?? '') === u).map((o) => o.name)
  } else chosen = outputs.slice(0, 1).map((o) => o.name)
  const param = opts.parameterName ?? name
  const results: Record<string, CellResult> = { [name]: { ...result!, name } }
  if (opts.xValues) results[X_REF] = { index: -1, name: X_REF, kind: 'formula', status: 'ok', value: [...opts.xValues], unit: opts.xUnit ?? '' }
  for (const o of chosen) results[o] = { index: -1, name: o, kind: 'formula', status: 'ok', value: 0, unit: units[o] ?? '' }
  const scalar = outputs.find((o) => o.name === chosen[0])?.scalar ?? false
  const model = buildFigure(
    {
      kind: 'figure',
      traces: chosen.map((o) => ({ x: scalar ? param : X_REF, y: o })),
      sweep: name,
      sweepView: opts.view ?? 'curves',
      x: { label: scalar ? param : (opts.xName ?? (opts.xValues ? 'x' : 'point number')) },
    },
    results,
  )
  if (model.sweep?.view === 'curves') model.sweep.parameterLabel = param
  if (model.sweep?.view === 'map') model.y.title = `${param}${result?.unit ? ` (${prettyUnit(result.unit)})` : ''}`
  return model
}

/**
 * A band-edge fit drawn as its Tauc or Urbach plot: the data as points, the fitted line, the window shaded, Eg marked.
 * `live` draws a window being chosen on the figure instead of the cell's own: its shading, and its refit line and gap
 * (see windowFit).
 */
export function fitFigure(spec: FitSpec, results: Record<string, CellResult | undefined>, live?: { window: [number, number]; fit: WindowFit | null }): FigureModel {
  const base: FigureModel = {
    series: [],
    x: { title: '', unit: '', scale: 'linear', quantity: 'energy' },
    y: { title: '', unit: '', scale: 'linear', quantity: null },
    band: null,
    marks: [],
    markAxis: 'x',
    regions: [],
    messages: [],
  }
  const d = fitPlotData(spec, results)
  if (!d.ok) return { ...base, messages: [d.message] }
  const p = d.value
  base.title = p.method === 'tauc' ? `Tauc plot of ${spec.y}` : `Urbach plot of ${spec.y}`
  base.x = { title: `${spec.x} (${prettyUnit(p.xUnit)})`, unit: p.xUnit, scale: 'linear', quantity: 'energy' }
  base.y = { title: p.yTitle, unit: '', scale: 'linear', quantity: null }
  base.series.push({ name: 'data', x: p.x, y: p.y, style: 'points', color: traceColor(0) })
  // the x axis spans the data, not the fitted line: a window dragged across the plot must not move the axis under it
  const xs = p.x.filter(Number.isFinite)
  if (xs.length > 1) {
    const [lo, hi] = [Math.min(...xs), Math.max(...xs)]
    const pad = 0.02 * (hi - lo)
    if (hi > lo) base.x.range = [lo - pad, hi + pad]
  }
  if (live) {
    const f = live.fit
    const text = f ? `${f.quantity} = ${formatWithError(f.value, f.err)} ${prettyUnit(p.xUnit)}` : ''
    if (f) base.series.push({ name: f.quantity === 'Eu' ? `fitted line, ${text}` : 'fitted line', x: [...f.line.x], y: [...f.line.y], style: 'line', color: 'accent' })
    base.regions.push({ from: live.window[0], to: live.window[1], label: 'fit window' })
    if (f && f.quantity === 'Eg') base.marks.push({ ref: `${spec.name}.Eg`, at: f.value, band: f.err > 0 ? [f.value - f.err, f.value + f.err] : undefined, label: `${spec.name}.${text}` })
  } else if (p.line)
    base.series.push({ name: p.method === 'urbach' && p.result ? `fitted line, ${p.result}` : 'fitted line', x: [...p.line.x], y: [...p.line.y], style: 'line', color: 'accent' })
  if (!live && p.window) base.regions.push({ from: p.window[0], to: p.window[1], label: 'fit window' })
  const value = results[spec.name]?.value as Record<string, unknown> | undefined
  if (!live && p.method === 'tauc' && p.result && typeof value?.Eg === 'number') {
    const err = typeof value.Eg_err === 'number' ? value.Eg_err : undefined
    base.marks.push({ ref: `${spec.name}.Eg`, at: value.Eg, band: err ? [value.Eg - err, value.Eg + err] : undefined, label: `${spec.name}.${p.result}` })
  }
  // the line runs to zero at Eg: keep the plot's y from starting far below zero
  if (p.method === 'tauc') {
    const finite = p.y.filter(Number.isFinite)
    const top = Math.max(...finite, ...(live?.fit ? live.fit.line.y : p.line ? p.line.y : []))
    if (Number.isFinite(top) && top > 0) base.y.range = [-0.03 * top, 1.05 * top]
  }
  base.messages = p.notes
  return base
}
