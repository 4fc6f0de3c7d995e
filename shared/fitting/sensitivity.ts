/**
 * How much a band-edge result depends on where its window is put: the Tauc gap (or the Urbach energy) refitted as
 * either end of the window moves, the other end held. A gap that moves by several standard errors when an end moves
 * by a few per cent of the window is a gap chosen by the window, not by the data.
 *
 * Units are whatever the caller's are, as long as they are consistent: E in any energy unit (the results come out in
 * it), α in any unit of inverse length (the Tauc gap and the Urbach energy do not depend on α's scale).
 */
import { taucFit, urbachFit } from './edges'

export interface SensitivityOptions {
  method: 'tauc' | 'urbach'
  /** Tauc exponent (1/2 direct allowed, 2 indirect allowed); ignored for Urbach. */
  r?: number
  /** Steps each way for each end (default 4). */
  steps?: number
  /** One step as a fraction of the window width (default 0.05: ±20 % with 4 steps). */
  fraction?: number
}

export interface SensitivityPoint {
  /** Which end moved. */
  end: 'from' | 'to'
  /** The shift of that end, in steps (negative: towards lower energy). */
  step: number
  from: number
  to: number
  /** Eg (Tauc) or Eu (Urbach) and its standard error, in E's unit; undefined when this window gives no fit. */
  value?: number
  err?: number
  /** Points inside the window. */
  n?: number
}

export interface WindowSensitivity {
  quantity: 'Eg' | 'Eu'
  /** The fit of the window as given. */
  base: { value: number; err: number; n: number }
  /** Every shifted window, the `from` end's moves first, each ordered from the lowest shift up; step 0 included. */
  points: SensitivityPoint[]
  /** The step size in E's unit. */
  stepSize: number
  /** Largest |value − base| over the shifted windows that could be fitted. */
  spread: number
  /** spread over the base standard error (Infinity for an exact fit that moves; 0 when nothing moves). */
  spreadInErrors: number
  /** Shifted windows that gave no fit (too few points, a falling plot, α not usable). */
  failed: number
}

function fitOne(E: ArrayLike<number>, alpha: ArrayLike<number>, from: number, to: number, opts: SensitivityOptions): { value: number; err: number; n: number } {
  if (opts.method === 'tauc') {
    const f = taucFit(E, alpha, opts.r ?? 0.5, from, to)
    return { value: f.Eg, err: f.Eg_err, n: f.n }
  }
  const f = urbachFit(E, alpha, from, to)
  return { value: f.Eu, err: f.Eu_err, n: f.n }
}

/**
 * Refits the window [from, to] with each end moved by −steps…+steps steps of `fraction` × (to − from), the other end
 * held. Returns null when the window itself gives no fit.
 *
 * @example for α of alpha_direct (a straight Tauc plot above Eg) every window above Eg gives the same Eg: spread 0.
 */
export function windowSensitivity(E: ArrayLike<number>, alpha: ArrayLike<number>, from: number, to: number, opts: SensitivityOptions): WindowSensitivity | null {
  const lo = Math.min(from, to)
  const hi = Math.max(from, to)
  let base: { value: number; err: number; n: number }
  try {
    base = fitOne(E, alpha, lo, hi, opts)
  } catch {
    return null
  }
  const steps = Math.max(1, Math.round(opts.steps ?? 4))
  const stepSize = (opts.fraction ?? 0.05) * (hi - lo)
  const points: SensitivityPoint[] = []
  let spread = 0
  let failed = 0
  for (const end of ['from', 'to'] as const) {
    for (let k = -steps; k <= steps; k++) {
      const a = end === 'from' ? lo + k * stepSize : lo
      const b = end === 'to' ? hi + k * stepSize : hi
      const point: SensitivityPoint = { end, step: k, from: a, to: b }
      if (k === 0) Object.assign(point, base)
      else if (a < b) {
        try {
          Object.assign(point, fitOne(E, alpha, a, b, opts))
          spread = Math.max(spread, Math.abs((point.value as number) - base.value))
        } catch {
          failed++
        }
      } else failed++
      points.push(point)
    }
  }
  const spreadInErrors = spread === 0 ? 0 : base.err > 0 ? spread / base.err : Infinity
  return { quantity: opts.method === 'tauc' ? 'Eg' : 'Eu', base, points, stepSize, spread, spreadInErrors, failed }
}
