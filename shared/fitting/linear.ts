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
  /** Residual standard deviation s. */
  sigma: number
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
  }
}
