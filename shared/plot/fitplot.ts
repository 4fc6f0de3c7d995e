/**
 * Data for drawing a band-edge fit: the Tauc plot, (αE)^(1/r) against E with the fitted straight line crossing zero
 * at Eg, or the Urbach plot, ln α against E with slope 1/Eu; the fit window is returned for shading.
 *
 * The line is drawn through the least-squares centroid of the points in the window (an ordinary least-squares line
 * always passes through the centroid of the fitted points) and, for Tauc, through (Eg, 0) — so it needs only the
 * fitted Eg or Eu, not the slope's units. Values are shown in the conventional units: α in cm⁻¹, E in eV.
 */
import type { CellResult } from '../schema/result'
import { linearFit, taucFit, urbachFit } from '../fitting/index'
import { formatWithError } from './format'
import { resolveRef, unusable, type Resolved, type Results } from './resolve'
import { converter, prettyUnit, spectralQuantity } from './units'

export interface FitSpec {
  name: string
  method: 'tauc' | 'urbach' | 'model'
  x: string
  y: string
  r?: number
  from?: number
  to?: number
  unit?: string
}

export interface FitPlotData {
  method: 'tauc' | 'urbach'
  /** Photon energies in `xUnit` (the fit's unit). */
  x: number[]
  /** (αE)^(1/r) with α in cm⁻¹ and E in eV (Tauc), or ln(α / cm⁻¹) (Urbach). */
  y: number[]
  /** α in cm⁻¹ at each x (what a window refit needs). */
  alpha: number[]
  /** Tauc exponent (1/2 when not given). */
  r: number
  xUnit: string
  /** The x cell's display unit: the unit of the fit cell's from/to. */
  windowUnit: string
  yTitle: string
  /** Fit window in `xUnit`, low to high. */
  window?: [number, number]
  line?: { x: [number, number]; y: [number, number] }
  /** e.g. "Eg = 1.481 ± 0.002 eV", "Eu = 22.1 ± 0.4 meV". */
  result?: string
  /** Plain sentences about what could not be drawn. */
  notes: string[]
}

/** A Tauc exponent 1/r as a superscript: r = 1/2 → "²", r = 2 → "^½", r = 3/2 → "^(2/3)". */
export function taucPower(r: number): string {
  const p = 1 / r
  const known: [number, string][] = [
    [2, '²'],
    [0.5, '^½'],
    [2 / 3, '^(2/3)'],
    [1 / 3, '^(1/3)'],
    [1, ''],
    [3, '³'],
  ]
  for (const [v, s] of known) if (Math.abs(p - v) < 1e-9) return s
  return `^(1/${Number(r.toPrecision(4))})`
}

function centroid(x: number[], y: number[], lo: number, hi: number): [number, number] | null {
  let sx = 0
  let sy = 0
  let n = 0
  for (let i = 0; i < x.length; i++)
    if (x[i] >= lo && x[i] <= hi && Number.isFinite(y[i]) && Number.isFinite(x[i])) {
      sx += x[i]
      sy += y[i]
      n++
    }
  return n >= 2 ? [sx / n, sy / n] : null
}

/** Prepares a Tauc or Urbach fit for drawing from the fit's spec, its result and the results of its x and y cells. */
export function fitPlotData(spec: FitSpec, results: Results): Resolved<FitPlotData> {
  if (spec.method === 'model') return { ok: false, message: `Fit "${spec.name}" is a model fit; its curve is drawn in a figure of the model cell against the data.` }
  const method = spec.method
  const xr = resolveRef(spec.x, results)
  if (!xr.ok) return xr
  const yr = resolveRef(spec.y, results)
  if (!yr.ok) return yr
  if (xr.value.kind !== 'array' || yr.value.kind !== 'array')
    return { ok: false, message: `Fit "${spec.name}" needs series for x and y; "${spec.x}" or "${spec.y}" is a single number.` }
  const xs = xr.value
  const ys = yr.value
  if (xs.values.length !== ys.values.length)
    return { ok: false, message: `"${spec.x}" has ${xs.values.length} values but "${spec.y}" has ${ys.values.length}; they must have the same length.` }
  if (!spectralQuantity(xs.unit)) return { ok: false, message: `"${spec.x}" is in ${xs.unit ? `"${xs.unit}"` : 'no unit'}; a band-edge fit needs photon energies (or wavelengths).` }
  const fitResult: CellResult | undefined = results[spec.name]
  const fitUnit = spec.unit ?? fitResult?.unit ?? 'eV'
  const toEv = converter(xs.unit, 'eV')
  const toFit = converter('eV', fitUnit)
  const alphaToCm = converter(ys.unit || '1/m', '1/cm')
  if (!toEv.ok || !toFit.ok) return { ok: false, message: `Fit "${spec.name}": ${!toEv.ok ? toEv.message : (toFit as { message: string }).message}.` }
  if (!alphaToCm.ok) return { ok: false, message: `"${spec.y}" is in "${ys.unit}"; a band-edge fit needs an absorption coefficient (1/cm, 1/m, 1/um).` }

  const r = spec.r ?? 0.5
  const eV = xs.values.map(toEv.value)
  const alpha = ys.values.map(alphaToCm.value)
  const x = eV.map(toFit.value)
  const y =
    method === 'tauc'
      ? alpha.map((a, i) => (a > 0 && eV[i] > 0 ? (a * eV[i]) ** (1 / r) : a === 0 ? 0 : NaN))
      : alpha.map((a) => (a > 0 ? Math.log(a) : NaN))
  const yTitle = method === 'tauc' ? `(αE)${taucPower(r)}   [α in cm⁻¹, E in eV]` : 'ln α   [α in cm⁻¹]'
  const notes: string[] = []

  let window: [number, number] | undefined
  if (spec.from !== undefined && spec.to !== undefined) {
    const w = converter(xs.unit, fitUnit)
    if (w.ok) {
      const a = w.value(spec.from)
      const b = w.value(spec.to)
      window = [Math.min(a, b), Math.max(a, b)]
    }
  }

  const data: FitPlotData = { method, x, y, alpha, r, xUnit: fitUnit, windowUnit: xs.unit, yTitle, window, notes }
  const why = unusable(spec.name, fitResult)
  if (why) {
    notes.push(why)
    return { ok: true, value: data }
  }
  const value = (fitResult?.value ?? {}) as Record<string, unknown>
  const finiteX = x.filter(Number.isFinite)
  const [lo, hi] = window ?? [Math.min(...finiteX), Math.max(...finiteX)]
  const c = centroid(x, y, lo, hi)
  if (method === 'tauc') {
    const Eg = value.Eg
    if (typeof Eg !== 'number') {
      notes.push(`Fit "${spec.name}" gives no Eg.`)
      return { ok: true, value: data }
    }
    data.result = `Eg = ${formatWithError(Eg, typeof value.Eg_err === 'number' ? value.Eg_err : undefined)} ${prettyUnit(fitUnit)}`
    if (c && c[0] !== Eg) {
      const slope = c[1] / (c[0] - Eg)
      const end = hi + 0.15 * (hi - lo)
      data.line = { x: [Eg, end], y: [0, slope * (end - Eg)] }
    } else notes.push('Too few points in the fit window to draw the fitted line.')
  } else {
    const Eu = value.Eu
    if (typeof Eu !== 'number' || !(Eu > 0)) {
      notes.push(`Fit "${spec.name}" gives no Urbach energy.`)
      return { ok: true, value: data }
    }
    data.result = `Eu = ${formatWithError(Eu, typeof value.Eu_err === 'number' ? value.Eu_err : undefined)} ${prettyUnit(fitUnit)}`
    if (c) {
      const pad = 0.15 * (hi - lo)
      const a = lo - pad
      const b = hi + pad
      data.line = { x: [a, b], y: [c[1] + (a - c[0]) / Eu, c[1] + (b - c[0]) / Eu] }
    } else notes.push('Too few points in the fit window to draw the fitted line.')
  }
  return { ok: true, value: data }
}

export interface WindowFit {
  /** Eg (Tauc) or Eu (Urbach) with its standard error, in the plot's x unit. */
  quantity: 'Eg' | 'Eu'
  value: number
  err: number
  r2: number
  n: number
  /** The fitted straight line in the plot's coordinates, drawn across the window (Tauc: from Eg). */
  line: { x: [number, number]; y: [number, number] }
  /** Data minus line at each point inside the window, in the plot's y. */
  residuals: { x: number[]; y: number[] }
}

/**
 * Refits a Tauc or Urbach plot over the window [lo, hi] (x unit of the plot), as the figure does while a window is
 * dragged: the value ± standard error from shared/fitting (the same numbers the fit cell gives, its x in the plot's
 * unit), and the straight line and residuals in the plot's own coordinates. Returns a plain sentence when the window
 * gives no fit.
 */
export function windowFit(data: FitPlotData, lo: number, hi: number): { ok: true; value: WindowFit } | { ok: false; message: string } {
  const a = Math.min(lo, hi)
  const b = Math.max(lo, hi)
  const px: number[] = []
  const py: number[] = []
  let bad = 0
  for (let i = 0; i < data.x.length; i++) {
    if (!(data.x[i] >= a && data.x[i] <= b)) continue
    const alpha = data.alpha[i]
    if (!Number.isFinite(alpha) || alpha < 0 || (data.method === 'urbach' && alpha === 0)) bad++
    else {
      px.push(data.x[i])
      py.push(data.y[i])
    }
  }
  if (bad > 0) {
    const need = data.method === 'urbach' ? 'a finite α above zero' : 'a finite α of zero or more'
    return { ok: false, message: `${bad} point${bad === 1 ? '' : 's'} inside this window ${bad === 1 ? 'has' : 'have'} no usable α (the fit needs ${need} throughout): move the window onto the edge.` }
  }
  if (px.length < 3) return { ok: false, message: `The window holds ${px.length} point${px.length === 1 ? '' : 's'}; a fit needs at least 3.` }
  let value: number
  let err: number
  let r2: number
  try {
    if (data.method === 'tauc') {
      const f = taucFit(data.x, data.alpha, data.r, a, b)
      ;[value, err, r2] = [f.Eg, f.Eg_err, f.r2]
    } else {
      const f = urbachFit(data.x, data.alpha, a, b)
      ;[value, err, r2] = [f.Eu, f.Eu_err, f.r2]
    }
  } catch (e) {
    // what is left is a falling plot or equal x values: sentences without numbers in units
    return { ok: false, message: e instanceof Error ? e.message : String(e) }
  }
  const line = linearFit(px, py)
  const at = (x: number) => line.intercept + line.slope * x
  const pad = 0.15 * (b - a)
  const x0 = data.method === 'tauc' ? Math.min(value, a) : a - pad
  const x1 = b + pad
  return {
    ok: true,
    value: {
      quantity: data.method === 'tauc' ? 'Eg' : 'Eu',
      value,
      err,
      r2,
      n: px.length,
      line: { x: [x0, x1], y: [at(x0), at(x1)] },
      residuals: { x: px, y: py.map((y, i) => y - at(px[i])) },
    },
  }
}
