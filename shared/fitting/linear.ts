/**
 * Ordinary least-squares straight line with the standard errors and covariance of its two coefficients.
 */
import { FitError } from './errors'

export interface LinearFit {
  slope: number
  intercept: number
  /** Standard errors from the residual variance s² = SSR/(n − 2). */
  slopeErr: number
  interceptErr: number
  /** [[var(slope), cov(slope, intercept)], [cov(slope, intercept), var(intercept)]]. */
  covariance: [[number, number], [number, number]]
  /** Coefficient of determination 1 − SSR/SST. */
  r2: number
  /** Number of points. */
  n: number
  /** Mean of x and of y, and Σ(x − x̄)² — what error propagation through the line needs. */
  xMean: number
  yMean: number
  sxx: number
  /** Residual standard deviation s (1 for a weighted fit, whose errors come from the given σ). */
  sigma: number
  /** Standard error of the fitted line at x̄: s/√n, or 1/√Σw for a weighted fit. */
  meanErr: number
  /** Σ(yᵢ − lineᵢ)², or Σ((yᵢ − lineᵢ)/σᵢ)² for a weighted fit. */
  chi2: number
}

/**
 * Least-squares line y = slope·x + intercept through the points (x[i], y[i]), computed from centred sums.
 *
 * - `x`, `y`: equal-length arrays of finite numbers, at least 3 points, x not all equal
 * - result: slope, intercept, their standard errors and covariance (from s² = SSR/(n − 2)), r², n
 *
 * Source: N. R. Draper, H. Smith, Applied Regression Analysis, 3rd ed. (1998), ch. 1 (var(b1) = s²/Sxx,
 * var(b0) = s²(1/n + x̄²/Sxx), cov(b0, b1) = −x̄·s²/Sxx).
 *
 * @example linearFit([0, 1, 2, 3], [1, 3, 5, 7]) → slope 2, intercept 1, slopeErr 0, r2 1, n 4
 * @throws FitError when there are fewer than 3 points, a value is not finite, or all x are equal
 */
export function linearFit(x: ArrayLike<number>, y: ArrayLike<number>): LinearFit {
  const n = x.length
  if (y.length !== n) throw new FitError(`x and y have different lengths (${n} and ${y.length}).`)
  if (n < 3) throw new FitError(`A straight-line fit with uncertainties needs at least 3 points; it got ${n}.`)
  let sx = 0
  let sy = 0
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) {
      throw new FitError(`Point ${i + 1} of the fit is not a finite number (x = ${x[i]}, y = ${y[i]}).`)
    }
    sx += x[i]
    sy += y[i]
  }
  const xm = sx / n
  const ym = sy / n
  let sxx = 0
  let sxy = 0
  let syy = 0
  for (let i = 0; i < n; i++) {
    const dx = x[i] - xm
    const dy = y[i] - ym
    sxx += dx * dx
    sxy += dx * dy
    syy += dy * dy
  }
  if (!(sxx > 0) || !(sxx > 1e-28 * n * xm * xm)) {
    throw new FitError('All x values of the fit are equal, so no slope can be fitted.')
  }
  const slope = sxy / sxx
  const intercept = ym - slope * xm
  let ssr = 0
  for (let i = 0; i < n; i++) {
    const r = y[i] - (intercept + slope * x[i])
    ssr += r * r
  }
  const s2 = ssr / (n - 2)
  const varSlope = s2 / sxx
  const varIntercept = s2 * (1 / n + (xm * xm) / sxx)
  const cov = (-xm * s2) / sxx
  const r2 = syy > 0 ? 1 - ssr / syy : ssr === 0 ? 1 : 0
  return {
    slope,
    intercept,
    slopeErr: Math.sqrt(varSlope),
    interceptErr: Math.sqrt(varIntercept),
    covariance: [[varSlope, cov], [cov, varIntercept]],
    r2,
    n,
    xMean: xm,
    yMean: ym,
    sxx,
    sigma: Math.sqrt(s2),
    meanErr: Math.sqrt(s2 / n),
    chi2: ssr,
  }
}

/**
 * Weighted least-squares line y = slope·x + intercept, each point weighted by 1/σᵢ², with errors from the σ as given
 * (not rescaled by χ²): var(slope) = 1/Sxx_w, var(intercept) = 1/Σw + x̄w²/Sxx_w, cov = −x̄w/Sxx_w, where
 * x̄w = Σwx/Σw and Sxx_w = Σw(x − x̄w)² (the centred form of the determinant Δ = Σw·Σwx² − (Σwx)²).
 *
 * - `x`, `y`: equal-length arrays of finite numbers, at least 3 points, x not all equal
 * - `sigma`: the standard deviation of each y (finite, > 0), in y's units
 * - result: as linearFit, with xMean, yMean the weighted means, sxx = Sxx_w, sigma = 1, meanErr = 1/√Σw,
 *   chi2 = Σ((y − line)/σ)², r2 = 1 − χ²/Σw(y − ȳw)²
 *
 * Source: P. R. Bevington, D. K. Robinson, Data Reduction and Error Analysis for the Physical Sciences, 3rd ed.
 * (2003), ch. 6 (eqs. 6.12 and 6.21–6.22, least squares with individual σᵢ).
 *
 * @example weightedLinearFit([0, 1, 2], [1, 3, 5], [1, 1, 1]) → slope 2, intercept 1, slopeErr 1/√2 = 0.70711, chi2 0
 * @throws FitError for fewer than 3 points, a value that is not finite, a σ that is not above zero, or equal x
 */
export function weightedLinearFit(x: ArrayLike<number>, y: ArrayLike<number>, sigma: ArrayLike<number>): LinearFit {
  const n = x.length
  if (y.length !== n || sigma.length !== n) throw new FitError(`x, y and σ have different lengths (${n}, ${y.length} and ${sigma.length}).`)
  if (n < 3) throw new FitError(`A straight-line fit with uncertainties needs at least 3 points; it got ${n}.`)
  let sw = 0
  let swx = 0
  let swy = 0
  const w = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) throw new FitError(`Point ${i + 1} of the fit is not a finite number (x = ${x[i]}, y = ${y[i]}).`)
    if (!(sigma[i] > 0) || !Number.isFinite(sigma[i])) throw new FitError(`The standard deviation σ of point ${i + 1} must be a finite number above zero (got ${sigma[i]}).`)
    w[i] = 1 / (sigma[i] * sigma[i])
    sw += w[i]
    swx += w[i] * x[i]
    swy += w[i] * y[i]
  }
  const xm = swx / sw
  const ym = swy / sw
  let sxx = 0
  let sxy = 0
  let syy = 0
  for (let i = 0; i < n; i++) {
    const dx = x[i] - xm
    const dy = y[i] - ym
    sxx += w[i] * dx * dx
    sxy += w[i] * dx * dy
    syy += w[i] * dy * dy
  }
  if (!(sxx > 0) || !(sxx > 1e-28 * sw * xm * xm)) throw new FitError('All x values of the fit are equal, so no slope can be fitted.')
  const slope = sxy / sxx
  const intercept = ym - slope * xm
  let chi2 = 0
  for (let i = 0; i < n; i++) {
    const r = y[i] - (intercept + slope * x[i])
    chi2 += w[i] * r * r
  }
  const varSlope = 1 / sxx
  const varIntercept = 1 / sw + (xm * xm) / sxx
  const cov = -xm / sxx
  return {
    slope, intercept, slopeErr: Math.sqrt(varSlope), interceptErr: Math.sqrt(varIntercept),
    covariance: [[varSlope, cov], [cov, varIntercept]],
    r2: syy > 0 ? 1 - chi2 / syy : chi2 === 0 ? 1 : 0,
    n, xMean: xm, yMean: ym, sxx, sigma: 1, meanErr: Math.sqrt(1 / sw), chi2,
  }
}
