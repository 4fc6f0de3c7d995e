/**
 * Non-linear least squares for vector-valued models: Levenberg–Marquardt steps from ml-levenberg-marquardt, with the
 * problem rescaled so that SI parameters of very different sizes (an energy of 1e-19 J beside a coefficient of 1e6)
 * and data of any magnitude all look O(1) to the optimiser, a central-difference Jacobian recomputed at every step,
 * step rejection with Marquardt's damping schedule (the library keeps steps that raise χ², so it is driven one step
 * at a time), and standard errors from the Jacobian at the optimum.
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt'
import { Matrix, SingularValueDecomposition } from 'ml-matrix'
import { FitError } from './errors'

export interface ModelFitOptions {
  /** The model's values at the data points for the given parameters (same length as y each time). */
  evaluate: (params: number[]) => Float64Array
  /** Measured values. */
  y: ArrayLike<number>
  /** Start values, one per free parameter. */
  start: number[]
  /** Bounds (inclusive); omitted or ±Infinity entries are unbounded. */
  min?: number[]
  max?: number[]
  /** Statistical weights 1/σᵢ² (one number for all, or one per point); default 1. */
  weights?: number | ArrayLike<number>
  /**
   * True when the weights are 1/σᵢ² of known standard deviations: the errors are then √diag((JᵀWJ)⁻¹), not rescaled
   * by χ²/(n − p) (Bevington & Robinson (2003) ch. 8). Default false (errors scaled by the scatter of the data).
   */
  absoluteSigma?: boolean
  /** Levenberg–Marquardt iterations at most (default 200). */
  maxIterations?: number
  /** Parameter names, for the messages. */
  names?: string[]
  /** Give up with a FitError after this many milliseconds. */
  timeBudgetMs?: number
}

export interface ModelFit {
  params: number[]
  /** Standard errors √diag(C), C = (JᵀWJ)⁻¹·χ²/(n − p) (or (JᵀWJ)⁻¹ with `absoluteSigma`). */
  errors: number[]
  covariance: number[][]
  /** Σ wᵢ·(yᵢ − modelᵢ)² at the optimum. */
  chi2: number
  /** χ²/(n − p). */
  reducedChi2: number
  /** yᵢ − modelᵢ (unweighted). */
  residuals: Float64Array
  iterations: number
  /** True when χ² reached zero, stopped falling (relative change below 1e-12), the parameters stopped moving
   * (relative step below 1e-10), or no step could lower χ². */
  converged: boolean
}

/**
 * Levenberg–Marquardt fit of a vector-valued model to data, with bounds and start values.
 *
 * - `evaluate(params)`: model values at the n data points; `y`: the n data; `start`: p start values (n > p)
 * - `min`/`max`: optional bounds; `weights`: 1/σ² (default 1), `absoluteSigma` (errors from σ as given);
 *   `maxIterations` (default 200)
 * - result: { params, errors, covariance, chi2, reducedChi2, residuals, iterations, converged }
 *
 * Source: K. Levenberg, Q. Appl. Math. 2, 164 (1944); D. W. Marquardt, J. SIAM 11, 431 (1963); parameter
 * covariance (JᵀWJ)⁻¹·χ²/(n − p) as in W. H. Press et al., Numerical Recipes, 3rd ed. (2007), §15.5.
 *
 * @example fitModel({ evaluate: ([a, b]) => x.map((t) => a * Math.exp(-b * t)), y, start: [1, 1] }) on
 *   y = 2·e^(−0.5t) → params [2, 0.5], errors ≈ [0, 0], converged true
 * @throws FitError for too few points, start values outside the bounds, a model that returns the wrong length or
 *   non-finite values at the start, or a singular problem (parameters the data cannot tell apart)
 */
export function fitModel(options: ModelFitOptions): ModelFit {
  const { evaluate, y, start } = options
  const n = y.length
  const p = start.length
  const name = (k: number): string => options.names?.[k] ?? `parameter ${k + 1}`
  if (p === 0) throw new FitError('A model fit needs at least one free parameter.')
  if (n <= p) throw new FitError(`A model fit of ${p} parameter${p === 1 ? '' : 's'} needs more than ${p} data points; it got ${n}.`)
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i])) throw new FitError(`Data point ${i + 1} is not a finite number (${y[i]}).`)
  }
  const lo = start.map((_, k) => options.min?.[k] ?? -Infinity)
  const hi = start.map((_, k) => options.max?.[k] ?? Infinity)
  for (let k = 0; k < p; k++) {
    if (!Number.isFinite(start[k])) throw new FitError(`The start value of ${name(k)} is not a finite number.`)
    if (lo[k] > hi[k]) throw new FitError(`The bounds of ${name(k)} are reversed (min ${lo[k]} above max ${hi[k]}).`)
    if (start[k] < lo[k] || start[k] > hi[k]) {
      throw new FitError(`The start value of ${name(k)} (${start[k]}) lies outside its bounds [${lo[k]}, ${hi[k]}].`)
    }
  }
  const w = new Float64Array(n)
  const wopt = options.weights ?? 1
  for (let i = 0; i < n; i++) {
    const wi = typeof wopt === 'number' ? wopt : wopt[i]
    if (!(wi >= 0) || !Number.isFinite(wi)) throw new FitError(`Weight ${i + 1} must be a finite number, zero or positive (got ${wi}).`)
    w[i] = wi
  }
  if (typeof wopt !== 'number' && wopt.length !== n) {
    throw new FitError(`There are ${wopt.length} weights for ${n} data points.`)
  }
  const sw = w.map(Math.sqrt)
  const deadline = options.timeBudgetMs === undefined ? Infinity : Date.now() + options.timeBudgetMs

  // parameter scales: p_k = scale_k · u_k with u_k ≈ 1 at the start
  const scale = start.map((s, k) => {
    if (s !== 0) return Math.abs(s)
    const span = hi[k] - lo[k]
    return Number.isFinite(span) && span > 0 ? span : 1
  })
  // residual scale: the weighted RMS of the data (1 when the data are all zero)
  let yy = 0
  for (let i = 0; i < n; i++) yy += w[i] * y[i] * y[i]
  const yScale = yy > 0 ? Math.sqrt(yy / n) : 1

  // a two-entry cache: the optimiser evaluates the current point and the trial point in turn
  const cache: { key: number[]; val: Float64Array }[] = []
  // an error thrown by the caller's model passes through unchanged (the engine's own limits, for instance)
  let modelError: unknown = null
  const model = (u: ArrayLike<number>): Float64Array => {
    for (const c of cache) if (c.key.every((v, k) => v === u[k])) return c.val
    if (Date.now() > deadline) throw new FitError(`The model fit ran past its time budget of ${options.timeBudgetMs} ms.`)
    const params = Array.from({ length: p }, (_, k) => u[k] * scale[k])
    let m: Float64Array
    try {
      m = evaluate(params)
    } catch (e) {
      modelError = e
      throw e
    }
    if (!m || m.length !== n) throw new FitError(`The model gave ${m ? m.length : 0} values for ${n} data points.`)
    cache.unshift({ key: Array.from(u), val: m })
    if (cache.length > 2) cache.pop()
    return m
  }
  const scaled = (u: ArrayLike<number>): Float64Array => {
    const m = model(u)
    const out = new Float64Array(n)
    for (let i = 0; i < n; i++) out[i] = (m[i] * sw[i]) / yScale
    return out
  }
  const finiteAll = (a: Float64Array): boolean => {
    for (let i = 0; i < a.length; i++) if (!Number.isFinite(a[i])) return false
    return true
  }
  const ulo = lo.map((v, k) => v / scale[k])
  const uhi = hi.map((v, k) => v / scale[k])

  /** Central-difference Jacobian of the scaled model at u (n × p, row-major), one-sided at a bound or a domain edge. */
  const jacobian = (u: ArrayLike<number>): Float64Array => {
    const J = new Float64Array(n * p)
    const base = Array.from(u)
    const f0 = scaled(base)
    for (let k = 0; k < p; k++) {
      const step = 1e-6 * Math.max(Math.abs(base[k]), 1e-3)
      const a = base.slice()
      let up = Math.min(base[k] + step, uhi[k])
      let dn = Math.max(base[k] - step, ulo[k])
      a[k] = up
      let fu = up === base[k] ? f0 : scaled(a)
      if (!finiteAll(fu)) {
        up = base[k]
        fu = f0
      }
      a[k] = dn
      let fd = dn === base[k] ? f0 : scaled(a)
      if (!finiteAll(fd)) {
        dn = base[k]
        fd = f0
      }
      const dh = up - dn
      if (dh === 0) throw new FitError(`The model cannot be differentiated with respect to ${name(k)} at ${base[k] * scale[k]}.`)
      for (let i = 0; i < n; i++) J[i * p + k] = (fu[i] - fd[i]) / dh
    }
    return J
  }
  const chi2Of = (u: ArrayLike<number>): number => {
    const m = scaled(u)
    let s = 0
    for (let i = 0; i < n; i++) {
      const r = (y[i] * sw[i]) / yScale - m[i]
      s += r * r
    }
    return Number.isFinite(s) ? s : Infinity
  }

  let u = start.map((s, k) => s / scale[k])
  let chi = chi2Of(u)
  if (!Number.isFinite(chi)) {
    throw new FitError('The model is not a finite number at the start values; choose other start values.')
  }

  const data = { x: Float64Array.from({ length: n }, (_, i) => i), y: Float64Array.from({ length: n }, (_, i) => (y[i] * sw[i]) / yScale) }
  const paramFn = (v: number[]) => {
    const m = scaled(v)
    return (i: number): number => m[i]
  }
  const jacFn = (v: number[]) => {
    const J = jacobian(v)
    return (i: number): number[] => {
      const row = new Array<number>(p)
      for (let k = 0; k < p; k++) row[k] = J[i * p + k]
      return row
    }
  }

  // Marquardt's damping schedule around single library steps: the library solves (JᵀJ + λI)·δ = Jᵀr and applies the
  // bounds; a step that does not lower χ² is rejected here (λ × 10), an accepted one lowers λ (÷ 10).
  const maxIterations = options.maxIterations ?? 200
  const tolerance = 1e-26 * n
  let damping = 1e-3
  let iterations = 0
  let converged = chi <= tolerance
  while (!converged && iterations < maxIterations) {
    iterations++
    let trial: number[]
    try {
      trial = levenbergMarquardt(data, paramFn, {
        initialValues: u,
        minValues: ulo,
        maxValues: uhi,
        maxIterations: 1,
        damping,
        errorTolerance: 0,
        jacobianFunction: jacFn,
      }).parameterValues
    } catch (e) {
      if (e instanceof FitError || e === modelError) throw e
      throw new FitError(`The optimiser failed: ${(e as Error).message}.`)
    }
    const next = chi2Of(trial)
    if (next < chi) {
      const change = (chi - next) / chi
      let moved = 0
      for (let k = 0; k < p; k++) moved = Math.max(moved, Math.abs(trial[k] - u[k]) / Math.max(Math.abs(u[k]), 1e-3))
      u = trial.slice()
      chi = next
      damping = Math.max(damping / 10, 1e-12)
      if (chi <= tolerance || change < 1e-12 || moved < 1e-10) converged = true
    } else {
      damping *= 10
      // no step of any length lowers χ²: u is a minimum to rounding
      if (damping > 1e12) converged = true
    }
  }

  // covariance at the optimum, in scaled coordinates (well conditioned), then back to the parameters' units
  const J = jacobian(u)
  const JtJ = new Matrix(p, p)
  for (let a = 0; a < p; a++) {
    for (let b = a; b < p; b++) {
      let s = 0
      for (let i = 0; i < n; i++) s += J[i * p + a] * J[i * p + b]
      JtJ.set(a, b, s)
      JtJ.set(b, a, s)
    }
  }
  const svd = new SingularValueDecomposition(JtJ)
  const sv = svd.diagonal
  const smax = Math.max(...sv)
  const smin = Math.min(...sv)
  if (!(smax > 0) || smin <= 1e-13 * smax) {
    throw new FitError(
      'The fit is singular: the data cannot tell some of the free parameters apart (or one has no effect on the model); fix one of them or change the data range.',
    )
  }
  const inv = svd.inverse()
  const params = u.map((v, k) => v * scale[k])
  const final = model(u)
  const residuals = new Float64Array(n)
  let chi2 = 0
  for (let i = 0; i < n; i++) {
    residuals[i] = y[i] - final[i]
    chi2 += w[i] * residuals[i] * residuals[i]
  }
  const dof = n - p
  // in scaled coordinates (JᵀWJ)⁻¹ = inv·scale²/yScale² and χ² = chi·yScale²
  const scaledReduced = options.absoluteSigma ? 1 / (yScale * yScale) : chi / dof
  const covariance: number[][] = []
  for (let a = 0; a < p; a++) {
    const row: number[] = []
    for (let b = 0; b < p; b++) row.push(inv.get(a, b) * scaledReduced * scale[a] * scale[b])
    covariance.push(row)
  }
  const errors = covariance.map((row, k) => Math.sqrt(Math.max(row[k], 0)))
  return { params, errors, covariance, chi2, reducedChi2: chi2 / dof, residuals, iterations, converged }
}
