/**
 * A figure cell turned into a drawing model: series in the axes' units, axis titles, visible-band segments, band-gap
 * marks, an optional sweep family or map, and a plain sentence for everything that could not be drawn.
 * Independent of the charting library; the figure component maps this model onto it.
 */
import type { FigureCell, FigureTrace } from '../schema/sheet'
import { downsample } from './downsample'
import { placeMark, type Mark } from './marks'
import { traceColor } from './palette'
import { resolveRef, type Quantity, type Results } from './resolve'
import { sweepFamily, sweepMap, type SweepFamily, type SweepMap } from './sweep'
import { convertValues, prettyUnit, spectralQuantity, type SpectralQuantity } from './units'
import { visibleBand, type BandSegment } from './visible'

/** Longest series drawn point for point; longer ones are thinned (see downsample). */
export const MAX_DRAWN_POINTS = 4000

export interface FigureSeries {
  name: string
  x: number[]
  y: number[]
  style: 'line' | 'points' | 'line+points'
  color: string
  /** Points in the source series when it was thinned for drawing. */
  thinnedFrom?: number
}

export interface AxisModel {
  title: string
  unit: string
  scale: 'linear' | 'log'
  quantity: SpectralQuantity | null
  range?: [number, number]
}

export interface FigureModel {
  title?: string
  series: FigureSeries[]
  x: AxisModel
  y: AxisModel
  /** Visible-band shading on the x axis (in its unit), when asked for and possible. */
  band: BandSegment[] | null
  /** Marks on the x axis (or on y when only y is spectral). */
  marks: Mark[]
  markAxis: 'x' | 'y'
  sweep?: { view: 'curves'; family: SweepFamily; yUnit: string } | { view: 'map'; map: SweepMap; zUnit: string }
  /** Plain sentences: what could not be drawn and why. */
  messages: string[]
}

const QUANTITY_TITLES: Record<SpectralQuantity, string> = {
  energy: 'Photon energy',
  wavelength: 'Wavelength',
  wavenumber: 'Wavenumber',
  frequency: 'Frequency',
}

/**
 * An axis title with its unit: the user's label if set, else the quantity for spectral axes and the names drawn.
 * axisTitle(undefined, 'eV', ['E'], 'energy') → "Photon energy E (eV)"; axisTitle('α', '1/cm', []) → "α (cm⁻¹)".
 */
export function axisTitle(label: string | undefined, unit: string, names: readonly string[], quantity: SpectralQuantity | null = null): string {
  const u = prettyUnit(unit)
  const suffix = u ? ` (${u})` : ''
  if (label && label.trim()) return `${label.trim()}${suffix}`
  const unique = [...new Set(names)].slice(0, 3)
  const list = unique.join(', ') + (new Set(names).size > 3 ? ', …' : '')
  const head = quantity ? `${QUANTITY_TITLES[quantity]}${list ? ` ${list}` : ''}` : list
  return `${head || 'value'}${suffix}`
}

interface Pair {
  index: number
  trace: FigureTrace
  x: Quantity
  y: Quantity
}

function describe(t: FigureTrace, i: number): string {
  return `Trace ${i + 1} (${t.y || '?'} against ${t.x || '?'})`
}

function asArray(q: Quantity, n: number): number[] {
  return q.kind === 'array' ? q.values : new Array<number>(n).fill(q.value)
}

function isSweepOutput(ref: string, sweep: string | undefined, outputs: string[]): string | undefined {
  if (!sweep) return undefined
  const bare = ref.startsWith(`${sweep}.`) ? ref.slice(sweep.length + 1) : ref
  return outputs.includes(bare) ? bare : undefined
}

/** Builds the drawing model of a figure cell from the sheet's results (by cell name). */
export function buildFigure(cell: FigureCell, results: Results): FigureModel {
  const messages: string[] = []
  const pairs: Pair[] = []
  const sweepResult = cell.sweep ? results[cell.sweep] : undefined
  const sweepOutputs =
    sweepResult && sweepResult.kind === 'sweep' && typeof sweepResult.value === 'object' && sweepResult.value && 'outputs' in sweepResult.value
      ? Object.keys((sweepResult.value as { outputs: object }).outputs)
      : []
  const sweepPicks: { output: string; xRef: string }[] = []

  cell.traces.forEach((trace, i) => {
    const out = isSweepOutput(trace.y, cell.sweep, sweepOutputs)
    if (out) {
      sweepPicks.push({ output: out, xRef: trace.x })
      return
    }
    const x = resolveRef(trace.x, results)
    const y = resolveRef(trace.y, results)
    if (!x.ok || !y.ok) {
      messages.push(`${describe(trace, i)} is not drawn. ${!x.ok ? x.message : ''}${!x.ok && !y.ok ? ' ' : ''}${!y.ok ? y.message : ''}`)
      return
    }
    if (x.value.kind === 'array' && y.value.kind === 'array' && x.value.values.length !== y.value.values.length) {
      messages.push(
        `${describe(trace, i)} is not drawn: "${trace.x}" has ${x.value.values.length} values but "${trace.y}" has ${y.value.values.length}; they must have the same length.`,
      )
      return
    }
    pairs.push({ index: i, trace, x: x.value, y: y.value })
  })

  // sweep: chosen outputs, or the first output against the first trace's x
  let sweepModel: FigureModel['sweep']
  let sweepXUnit: string | undefined
  let sweepYUnit: string | undefined
  if (cell.sweep) {
    const pick = sweepPicks[0] ?? { output: sweepOutputs[0], xRef: cell.traces[0]?.x ?? '' }
    let xValues: number[] | undefined
    let xUnit: string | undefined
    if (pick.xRef) {
      const xr = resolveRef(pick.xRef, results)
      if (xr.ok && xr.value.kind === 'array') {
        xValues = xr.value.values
        xUnit = xr.value.unit
      } else if (!xr.ok) messages.push(`The sweep's x series: ${xr.message}`)
    }
    const outputUnit = pick.output ? (results[pick.output]?.unit ?? '') : ''
    const opts = { output: pick.output, xValues, xUnit }
    if ((cell.sweepView ?? 'curves') === 'map') {
      const m = sweepMap(sweepResult, opts)
      if (m.ok) {
        sweepModel = { view: 'map', map: m.value, zUnit: outputUnit }
        sweepXUnit = m.value.xUnit
        sweepYUnit = m.value.parameterUnit
        if (m.value.note) messages.push(m.value.note)
      } else messages.push(`Sweep "${cell.sweep}" is not drawn: ${m.message}`)
    } else {
      const f = sweepFamily(sweepResult, opts)
      if (f.ok) {
        sweepModel = { view: 'curves', family: f.value, yUnit: outputUnit }
        sweepXUnit = f.value.xUnit
        sweepYUnit = outputUnit
        if (f.value.note) messages.push(f.value.note)
      } else messages.push(`Sweep "${cell.sweep}" is not drawn: ${f.message}`)
    }
    if (sweepPicks.length > 1) messages.push(`Only one sweep output is drawn at a time; showing "${pick.output}".`)
  }

  const xUnit = cell.x?.unit ?? pairs[0]?.x.unit ?? sweepXUnit ?? ''
  const yUnit = cell.y?.unit ?? (sweepModel?.view === 'map' ? sweepYUnit : undefined) ?? pairs[0]?.y.unit ?? sweepYUnit ?? ''
  const xQuantity = spectralQuantity(xUnit)
  const yQuantity = cell.y?.unit && spectralQuantity(cell.y.unit) !== 'wavenumber' ? spectralQuantity(cell.y.unit) : null

  const series: FigureSeries[] = []
  for (const p of pairs) {
    const n = p.x.kind === 'array' ? p.x.values.length : p.y.kind === 'array' ? p.y.values.length : 1
    const cx = convertValues(asArray(p.x, n), p.x.unit, xUnit)
    const cy = convertValues(asArray(p.y, n), p.y.unit, yUnit)
    if (!cx.ok || !cy.ok) {
      messages.push(`${describe(p.trace, p.index)} is not drawn: ${!cx.ok ? `its x ${cx.message}` : `its y ${(cy as { message: string }).message}`}.`)
      continue
    }
    const name = p.trace.label ?? p.y.ref
    if (cell.y?.scale === 'log' && !cy.value.some((v) => v > 0))
      messages.push(`${describe(p.trace, p.index)} has no positive values, so nothing of it shows on a log axis.`)
    const thin = downsample(cx.value, cy.value, MAX_DRAWN_POINTS)
    series.push({
      name,
      x: thin.x,
      y: thin.y,
      style: p.trace.style ?? (n === 1 ? 'points' : 'line'),
      color: traceColor(series.length),
      thinnedFrom: thin.x.length < n ? n : undefined,
    })
  }

  const names = (axis: 'x' | 'y'): string[] => pairs.map((p) => p[axis].ref)
  const x: AxisModel = {
    title: axisTitle(cell.x?.label, xUnit, pairs.length ? names('x') : sweepModel?.view === 'curves' && sweepModel.family.mode === 'single' ? [cell.sweep ?? ''] : names('x'), xQuantity),
    unit: xUnit,
    scale: cell.x?.scale ?? 'linear',
    quantity: xQuantity,
    range: cell.x?.min !== undefined && cell.x?.max !== undefined ? [cell.x.min, cell.x.max] : undefined,
  }
  const yNames = names('y')
  if (sweepModel?.view === 'curves') yNames.push(sweepModel.family.output)
  const y: AxisModel = {
    title: axisTitle(cell.y?.label, yUnit, sweepModel?.view === 'map' ? [`${cell.sweep}`] : yNames, yQuantity),
    unit: yUnit,
    scale: cell.y?.scale ?? 'linear',
    quantity: yQuantity,
    range: cell.y?.min !== undefined && cell.y?.max !== undefined ? [cell.y.min, cell.y.max] : undefined,
  }

  let band: BandSegment[] | null = null
  if (cell.x?.visibleBand) {
    band = xQuantity ? visibleBand(xUnit) : null
    if (!band) messages.push(`The visible band can only be shaded on a wavelength or energy axis; this x axis is in ${xUnit ? `"${xUnit}"` : 'no unit'}.`)
  }

  const markAxis: 'x' | 'y' = !xQuantity && yQuantity ? 'y' : 'x'
  const marks: Mark[] = []
  for (const ref of cell.marks ?? []) {
    const m = placeMark(ref, results, markAxis === 'x' ? xUnit : yUnit)
    if (m.ok) marks.push(m.value)
    else messages.push(m.message)
  }

  return { title: cell.title, series, x, y, band, marks, markAxis, sweep: sweepModel, messages }
}
