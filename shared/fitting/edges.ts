/**
 * Band-edge fits in a window: the Tauc plot ((αE)^(1/r) against E) for the gap, and ln α against E for the Urbach
 * energy. SI in and out: E in J, α in 1/m. The window is inclusive at both ends and may be given in either order.
 */
import { FitError } from './errors'
import { linearFit, weightedLinearFit, type LinearFit } from './linear'
import { q } from '../optics/constants'

export interface TaucFit {
  /** Gap −intercept/slope, J. */
  Eg: number
  /** Standard error of Eg propagated from the regression covariance, J. */
  Eg_err: number
  /** Tauc coefficient (the slope), in the units of alphaTauc's B. */
  B: number
  B_err: number
  r2: number
  /** Number of points inside the fit window */
  n: number
  /** Weighted fits: Σ((y − line)/σ)² of the Tauc plot, and per degree of freedom. */
  chi2?: number
  reducedChi2?: number
}

export interface UrbachFit {
  /** Urbach energy 1/slope of ln α, J. */
  Eu: number
  Eu_err: number
  /** α of the fitted line at E0, 1/m: alphaUrbach(E, alpha0, E0, Eu) reproduces the fit. */
  alpha0: number
  /** Reference energy of alpha0, J: the top of the data inside the window (where the tail meets the edge). */
  E0: number
  r2: number
  n: number
  /** Weighted fits: Σ((ln α − line)/σ_lnα)², and per degree of freedom. */
  chi2?: number
  reducedChi2?: number
}

const eV = (x: number): string => `${(x / q).toPrecision(4)} eV`

function windowIndices(E: ArrayLike<number>, alpha: ArrayLike<number>, from: number, to: number, method: string): number[] {
  if (E.length !== alpha.length) {
    throw new FitError(`The energies and absorption coefficients have different lengths (${E.length} and ${alpha.length}).`)
  }
  if (!Number.isFinite(from) || !Number.isFinite(to)) throw new FitError(`The ${method} fit window needs finite limits.`)
  const lo = Math.min(from, to)
  const hi = Math.max(from, to)
  const idx: number[] = []
  for (let i = 0; i < E.length; i++) {
    const e = E[i]
    if (e >= lo && e <= hi) {
      if (!Number.isFinite(alpha[i])) {
        throw new FitError(`The absorption coefficient is not a finite number at ${eV(e)}, inside the ${method} fit window (from and to).`)
      }
      idx.push(i)
    }
  }
  if (idx.length < 3) {
    throw new FitError(
      `The ${method} fit window from ${eV(lo)} to ${eV(hi)} holds ${idx.length} point${idx.length === 1 ? '' : 's'}; a fit needs at least 3.`,
    )
  }
  return idx
}

/**
 * Tauc fit: linear regression of (αE)^(1/r) on E inside the window; Eg = −intercept/slope, B = slope, and
 * Eg_err from the regression covariance. With ȳ the window mean of (αE)^(1/r), Eg = x̄ − ȳ/slope and ȳ and the slope
 * are uncorrelated, so var(Eg) = s²/(n·slope²) + ȳ²·s²/(slope⁴·Sxx) (the same as propagating the full
 * intercept–slope covariance, without its cancellation).
 *
 * - `E`: photon energies, J; `alpha`: α, 1/m (≥ 0 inside the window); `r`: Tauc exponent (1/2 direct, 2 indirect)
 * - `from`, `to`: window limits, J (inclusive, either order); at least 3 points inside
 * - `sigma` (optional): standard deviation of each α, 1/m; the Tauc points are then weighted by 1/σ² with
 *   σ of (αE)^(1/r) propagated to first order, and the errors come from σ (Bevington & Robinson (2003) ch. 6)
 * - result: { Eg, Eg_err (J), B, B_err, r2, n } (and chi2, reducedChi2 when weighted)
 *
 * Source: J. Tauc, R. Grigorovici, A. Vancu, phys. stat. sol. 15, 627 (1966); error propagation as in Draper &
 * Smith, Applied Regression Analysis (1998), ch. 1 and 3.
 *
 * @example taucFit(E, alphaDirect(E, 1.5 eV, B), 0.5, 1.55 eV, 1.9 eV) → Eg = 1.5 eV (to rounding), Eg_err ≈ 0, r2 = 1
 * @throws FitError for too few points in the window, a negative or non-finite α inside it, or a falling Tauc plot
 */
export function taucFit(E: ArrayLike<number>, alpha: ArrayLike<number>, r: number, from: number, to: number, sigma?: ArrayLike<number>): TaucFit {
  if (!(r > 0)) throw new FitError(`The Tauc exponent r must be positive (got ${r}).`)
  const idx = windowIndices(E, alpha, from, to, 'Tauc')
  const p = 1 / r
  const x = new Float64Array(idx.length)
  const y = new Float64Array(idx.length)
  const sy = sigma ? new Float64Array(idx.length) : undefined
  for (let j = 0; j < idx.length; j++) {
    const i = idx[j]
    if (alpha[i] < 0) throw new FitError(`The absorption coefficient is negative at ${eV(E[i])}, inside the Tauc fit window (from and to).`)
    x[j] = E[i]
    y[j] = p === 2 ? (alpha[i] * E[i]) ** 2 : Math.pow(alpha[i] * E[i], p)
    // σ of (αE)^p from σ of α: p·(αE)^(p−1)·E·σα (first-order propagation)
    if (sy) sy[j] = p * Math.pow(alpha[i] * E[i], p - 1) * E[i] * (sigma as ArrayLike<number>)[i]
  }
  const fit = sy ? weightedLinearFit(x, y, sy) : linearFit(x, y)
  if (!(fit.slope > 0)) {
    throw new FitError('The Tauc plot does not rise inside the window, so it gives no band gap; move the window onto the edge.')
  }
  const s = fit.slope
  const Eg = fit.xMean - fit.yMean / s
  // the line at x̄ and the slope are uncorrelated: var(Eg) = (var(line at x̄) + ȳ²·var(slope)/slope²)/slope²
  const varEg = (fit.meanErr ** 2 + (fit.yMean * fit.slopeErr / s) ** 2) / (s * s)
  return { Eg, Eg_err: Math.sqrt(varEg), B: s, B_err: fit.slopeErr, r2: fit.r2, n: fit.n, ...weighted(fit, sy) }
}

function weighted(fit: LinearFit, sy: Float64Array | undefined): { chi2?: number; reducedChi2?: number } {
  return sy ? { chi2: fit.chi2, reducedChi2: fit.chi2 / (fit.n - 2) } : {}
}

/**
 * Urbach fit: linear regression of ln α on E inside the window; Eu = 1/slope, Eu_err = slopeErr/slope²,
 * E0 = the highest photon energy inside the window and alpha0 = α of the fitted line there, so
 * alphaUrbach(E, alpha0, E0, Eu) is the fitted line (the usual form α = α0·exp((E − E0)/Eu), with α0 a measurable
 * size rather than the vanishing value extrapolated to E = 0).
 *
 * - `E`: photon energies, J; `alpha`: α, 1/m (> 0 inside the window); `from`, `to`: window limits, J (inclusive)
 * - `sigma` (optional): standard deviation of each α, 1/m; ln α is then weighted by (α/σ)²
 * - result: { Eu (J), Eu_err (J), alpha0 (1/m), E0 (J), r2, n } (and chi2, reducedChi2 when weighted)
 *
 * Source: F. Urbach, Phys. Rev. 92, 1324 (1953); regression errors as in Draper & Smith (1998), ch. 1.
 *
 * @example urbachFit(E, alphaUrbach(E, 1e5, 1.5 eV, 20 meV), 1.3 eV, 1.45 eV) → Eu = 20 meV (to rounding), r2 = 1
 * @throws FitError for too few points, α ≤ 0 inside the window (no logarithm), or a falling ln α
 */
export function urbachFit(E: ArrayLike<number>, alpha: ArrayLike<number>, from: number, to: number, sigma?: ArrayLike<number>): UrbachFit {
  const idx = windowIndices(E, alpha, from, to, 'Urbach')
  const x = new Float64Array(idx.length)
  const y = new Float64Array(idx.length)
  const sy = sigma ? new Float64Array(idx.length) : undefined
  for (let j = 0; j < idx.length; j++) {
    const i = idx[j]
    if (!(alpha[i] > 0)) {
      throw new FitError(
        `The absorption coefficient is ${alpha[i] === 0 ? 'zero' : 'negative'} at ${eV(E[i])}, inside the Urbach fit window; an Urbach fit takes its logarithm.`,
      )
    }
    x[j] = E[i]
    y[j] = Math.log(alpha[i])
    // σ of ln α is σα/α (first-order propagation)
    if (sy) sy[j] = (sigma as ArrayLike<number>)[i] / alpha[i]
  }
  const fit = sy ? weightedLinearFit(x, y, sy) : linearFit(x, y)
  if (!(fit.slope > 0)) {
    throw new FitError('ln α does not rise with energy inside the window, so it gives no Urbach energy.')
  }
  const s = fit.slope
  let E0 = -Infinity
  for (let j = 0; j < x.length; j++) if (x[j] > E0) E0 = x[j]
  return { Eu: 1 / s, Eu_err: fit.slopeErr / (s * s), alpha0: Math.exp(fit.intercept + s * E0), E0, r2: fit.r2, n: fit.n, ...weighted(fit, sy) }
}
