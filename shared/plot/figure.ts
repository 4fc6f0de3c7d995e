/**
 * A figure cell turned into a drawing model: series in the axes' units, axis titles, visible-band segments, band-gap
 * marks, an optional sweep family or map, and a plain sentence for everything that could not be drawn.
 * Independent of the charting library; the figure component maps this model onto it.
 */
import type { SweepValue } from '../schema/result'
import type { FigureCell, FigureTrace } from '../schema/sheet'
import { downsample, downsampleColumns } from './downsample'
import { formatNumber } from './format'
import { placeMark, type Mark } from './marks'
import { traceColor } from './palette'
import { resolveRef, type Quantity, type Results } from './resolve'
import { sweepFamily, sweepMap, type SweepFamily, type SweepMap } from './sweep'
import { converter, convertValues, prettyUnit, spectralQuantity, type SpectralQuantity } from './units'
import { visibleBand, type BandSegment } from './visible'

/** Longest series drawn point for point; longer ones are thinned (see downsample). */
export const MAX_DRAWN_POINTS = 4000

export interface FigureSeries {
  name: string
  x: number[]
  y: number[]
  style: 'line' | 'points' | 'line+points'
  color: string
  /** A dashed line (an earlier version's curve, drawn under the current one when two versions are compared). */
  dashed?: boolean
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
  /** Shaded x intervals in the x axis unit (a fit window), each with a short label. */
  regions: { from: number; to: number; label: string }[]
  /**
   * A sweep drawn as a family of curves (array outputs; curves already in the axes' units) or as a map (x in the x
   * axis unit, rows = parameter values on y, z in the output's unit). Scalar sweep outputs are ordinary `series`.
   */
  sweep?: { view: 'curves'; family: SweepFamily; yUnit: string; parameterLabel: string; logParameter: boolean } | { view: 'map'; map: SweepMap; zUnit: string; zTitle: string; logParameter: boolean }
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
 * An axis title with its unit: the user's label if set, else the names drawn, else the spectral quantity.
 * axisTitle(undefined, 'eV', ['E'], 'energy') → "E (eV)"; axisTitle(undefined, 'nm', [], 'wavelength') → "Wavelength (nm)";
 * axisTitle('α', '1/cm', []) → "α (cm⁻¹)".
 */
export function axisTitle(label: string | undefined, unit: string, names: readonly string[], quantity: SpectralQuantity | null = null): string {
  const u = prettyUnit(unit)
  const suffix = u ? ` (${u})` : ''
  if (label && label.trim()) return `${label.trim()}${suffix}`
  const unique = [...new Set(names)].slice(0, 3)
  const list = unique.join(', ') + (new Set(names).size > 3 ? ', …' : '')
  // The quantity word only stands in when nothing is named: a nm axis may be a thickness, an eV axis a swept gap.
  const head = list || (quantity ? QUANTITY_TITLES[quantity] : '')
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

function sweepOutputName(ref: string, sweep: string, outputs: string[]): string | undefined {
  const bare = ref.startsWith(`${sweep}.`) ? ref.slice(sweep.length + 1) : ref
  return outputs.includes(bare) ? bare : undefined
}

/** True for parameter values spaced by a constant ratio (a log sweep), so they are best shown on a log axis. */
export function isGeometric(values: readonly number[]): boolean {
  if (values.length < 3 || values.some((v) => !(v > 0))) return false
  const r0 = values[1] / values[0]
  if (Math.abs(r0 - 1) < 1e-9) return false
  for (let i = 2; i < values.length; i++) if (Math.abs(values[i] / values[i - 1] - r0) > 1e-6 * r0) return false
  return true
}

export interface BuildOptions {
  /** The swept parameter's name of each sweep cell (the result does not carry it), for legends: { thick: 'd' }. */
  sweepParameters?: Record<string, string>
}

/** Builds the drawing model of a figure cell from the sheet's results (by cell name). */
export function buildFigure(cell: FigureCell, results: Results, options: BuildOptions = {}): FigureModel {
  const messages: string[] = []
  const pairs: Pair[] = []
  const sweepName = cell.sweep
  const sweepResult = sweepName ? results[sweepName] : undefined
  const sweepValue = sweepResult?.status === 'ok' && sweepResult.kind === 'sweep' ? (sweepResult.value as SweepValue | undefined) : undefined
  const sweepOutputs = sweepValue && typeof sweepValue.outputs === 'object' ? Object.keys(sweepValue.outputs) : []
  const picks: { output: string; trace?: FigureTrace; index: number }[] = []

  cell.traces.forEach((trace, i) => {
    const out = sweepName ? sweepOutputName(trace.y, sweepName, sweepOutputs) : undefined
    if (out) {
      picks.push({ output: out, trace, index: i })
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

  // The sweep: outputs named by traces (or the first output), against the first such trace's x.
  let family: SweepFamily | undefined
  let familyYUnit = ''
  let logSweptX = false
  let map: SweepMap | undefined
  let mapZUnit = ''
  const view = cell.sweepView ?? 'curves'
  if (sweepName) {
    if (!sweepValue) {
      const r = sweepFamily(sweepResult, {})
      messages.push(`Sweep "${sweepName}" is not drawn: ${r.ok ? 'it has no result yet.' : r.message}`)
    } else {
      if (picks.length === 0 && sweepOutputs.length > 0) picks.push({ output: sweepOutputs[0], trace: cell.traces[0], index: -1 })
      const xRef = picks.find((p) => p.trace)?.trace?.x
      let xValues: number[] | undefined
      let xUnit: string | undefined
      const xr = xRef ? resolveRef(xRef, results) : undefined
      if (xr?.ok && xr.value.kind === 'array') {
        xValues = xr.value.values
        xUnit = xr.value.unit
      }
      const used = view === 'map' ? picks.slice(0, 1) : picks
      if (view === 'map' && picks.length > 1) messages.push(`A map shows one sweep output; showing "${picks[0].output}".`)
      for (const pick of used) {
        const opts = { output: pick.output, xValues, xUnit }
        if (view === 'map') {
          const m = sweepMap(sweepResult, opts)
          if (!m.ok) {
            messages.push(`Sweep "${sweepName}" is not drawn: ${m.message}`)
            continue
          }
          map = m.value
          mapZUnit = results[pick.output]?.unit ?? ''
          if (m.value.note) messages.push(m.value.note)
          continue
        }
        const f = sweepFamily(sweepResult, opts)
        if (!f.ok) {
          messages.push(`Sweep "${sweepName}" is not drawn: ${f.message}`)
          continue
        }
        const outUnit = results[pick.output]?.unit ?? ''
        if (f.value.mode === 'single') {
          const c = f.value.curves[0]
          logSweptX = isGeometric(c.x)
          const label = pick.trace && pick.trace.x !== pick.output ? pick.trace.x : sweepName
          pairs.push({
            index: pick.index,
            trace: { x: label, y: pick.output, label: pick.trace?.label ?? pick.output, style: pick.trace?.style },
            x: { kind: 'array', ref: label, cell: sweepName, values: c.x, unit: f.value.parameterUnit },
            y: { kind: 'array', ref: pick.output, cell: sweepName, values: c.y, unit: outUnit },
          })
        } else if (family) {
          messages.push(`One family of curves is drawn at a time; "${pick.output}" is left out (showing "${family.output}").`)
        } else {
          if (f.value.note) messages.push(f.value.note)
          family = f.value
          familyYUnit = outUnit
        }
      }
    }
  }

  pairs.sort((a, b) => a.index - b.index)
  const xUnit = cell.x?.unit ?? pairs[0]?.x.unit ?? family?.xUnit ?? map?.xUnit ?? ''
  const yUnit = cell.y?.unit ?? (map ? map.parameterUnit : undefined) ?? pairs[0]?.y.unit ?? (family ? familyYUnit : '')
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
    else if (cell.y?.scale === 'log') {
      const note = hiddenOnLog(cy.value, 'y', yUnit)
      if (note) messages.push(`${describe(p.trace, p.index)}: ${note}`)
    }
    if (cell.x?.scale === 'log' && cx.value.some((v) => v > 0)) {
      const note = hiddenOnLog(cx.value, 'x', xUnit)
      if (note) messages.push(`${describe(p.trace, p.index)}: ${note}`)
    }
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

  let sweep: FigureModel['sweep']
  const parameterLabel = (sweepName && options.sweepParameters?.[sweepName]) || (sweepName ?? '')
  if (family) {
    const cx = converter(family.xUnit, xUnit)
    const cy = converter(familyYUnit, yUnit)
    if (!cx.ok || !cy.ok) messages.push(`Sweep "${sweepName}" is not drawn: ${!cx.ok ? `its x ${cx.message}` : `its "${family.output}" ${(cy as { message: string }).message}`}.`)
    else {
      const fx = cx.value
      const fy = cy.value
      const curves = family.curves.map((c) => {
        const thin = downsample(c.x.map(fx), c.y.map(fy), MAX_DRAWN_POINTS)
        return { parameter: c.parameter, x: thin.x, y: thin.y }
      })
      sweep = { view: 'curves', family: { ...family, curves }, yUnit: familyYUnit, parameterLabel, logParameter: isGeometric(family.parameter) }
    }
  } else if (map) {
    const cx = converter(map.xUnit, xUnit)
    const cy = converter(map.parameterUnit, yUnit)
    if (!cx.ok || !cy.ok) messages.push(`Sweep "${sweepName}" is not drawn: ${!cx.ok ? `its x ${cx.message}` : `its parameter ${(cy as { message: string }).message}`}.`)
    else {
      const thin = downsampleColumns(map.x.map(cx.value), map.z, 1500)
      sweep = {
        view: 'map',
        map: { ...map, x: thin.x, z: thin.z, y: map.y.map(cy.value) },
        zUnit: mapZUnit,
        zTitle: axisTitle(undefined, mapZUnit, [map.output]),
        logParameter: isGeometric(map.y),
      }
    }
  }

  const xNames = pairs.map((p) => p.x.ref)
  if (!xNames.length && (family || map)) xNames.push(...cell.traces.slice(0, 1).map((t) => t.x))
  const x: AxisModel = {
    title: axisTitle(cell.x?.label, xUnit, xNames, xQuantity),
    unit: xUnit,
    scale: cell.x?.scale ?? (logSweptX && pairs.every((p) => p.x.cell === sweepName) ? 'log' : 'linear'),
    quantity: xQuantity,
    range: cell.x?.min !== undefined && cell.x?.max !== undefined ? [cell.x.min, cell.x.max] : undefined,
  }
  const yNames = pairs.map((p) => p.y.ref)
  if (family) yNames.push(family.output)
  const y: AxisModel = {
    title: axisTitle(cell.y?.label, yUnit, map ? [sweepName && options.sweepParameters?.[sweepName] ? parameterLabel : `${sweepName}: swept value`] : yNames, yQuantity),
    unit: yUnit,
    scale: cell.y?.scale ?? (map && isGeometric(map.y) ? 'log' : 'linear'),
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

  return { title: cell.title, series, x, y, band, marks, markAxis, regions: [], sweep, messages }
}

/**
 * The sentence for negative values a log axis cannot show (a measured α dips below zero where the film barely
 * absorbs, once a baseline is subtracted), or null when there are none. Plotly drops them without a word. Zeros are
 * left unmentioned: a model is zero below its gap by design.
 */
export function hiddenOnLog(values: readonly number[], axis: 'x' | 'y', unit: string): string | null {
  let count = 0
  let lowest = 0
  let finite = 0
  for (const v of values) {
    if (!Number.isFinite(v)) continue
    finite++
    if (v < 0) {
      count++
      if (v < lowest) lowest = v
    }
  }
  if (count === 0) return null
  const u = prettyUnit(unit)
  return `${count} of its ${finite} ${axis} values ${count === 1 ? 'is' : 'are'} negative (lowest ${formatNumber(lowest)}${u ? ` ${u}` : ''}) and cannot be shown on the log axis; ${count === 1 ? 'it is' : 'they are'} left out of the curve.`
}
