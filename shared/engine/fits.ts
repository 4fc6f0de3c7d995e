/**
 * Fit cells: `tauc` and `urbach` band-edge fits over a window, and `model` fits (Levenberg–Marquardt) of a formula
 * cell over chosen free parameter cells, re-evaluating the formula's subgraph with the trial values (compiled once,
 * never re-parsed). The fitting itself is shared/fitting's.
 *
 * Units: the window `from`/`to` is in the display unit of the `x` cell. Fitted energies (Eg, Eg_err, Eu, Eu_err, E0)
 * are shown in the fit's `unit` (default: the x cell's unit when it is an energy unit, else J); an Urbach α0 in the y
 * cell's display unit (1/cm); a Tauc B in the unit made of the x and y cells' display units ((1/cm·eV)^(1/r)/eV, so
 * eV/cm^2 for r = 1/2); a model fit's χ² and residuals in the y cell's display unit (χ² dimensionless when weighted).
 * The result states each output's unit in `units`. Model-fit parameters, their start values and bounds are in each
 * parameter cell's display unit. Formulas read a fit's results in SI: `edge.Eg` is in joules.
 *
 * Weighted fits: `sigma` names a cell of standard deviations of y (same length, y's units); the fit then minimises
 * χ² = Σ((y − f)/σ)² and its errors come from σ as given (Bevington & Robinson (2003) ch. 6 and 8).
 */
import type { FitCell, ParameterCell } from '../schema/sheet'
import { taucFit, urbachFit, fitModel } from '../fitting/index'
import type { Num } from '../optics/num'
import type { CellState, Env, PreparedCell } from './cells'
import { parameterValue } from './cells'
import { INPUT_DIGITS, MESSAGE_DIGITS, dimPhrase, formatNumber, formatPair } from './describe'
import { DIMENSIONLESS, ENERGY, INV_LENGTH, LENGTH, dimDiv, dimEquals, dimMul, dimPow, type Dim } from './dimensions'
import { clean, displayFor, siUnit } from './display'
import { CellError } from './errors'
import { parseUnit } from './units'
import { RecordValue, asNum, type Field, type Value } from './values'

interface Series {
  prepared: PreparedCell
  values: Float64Array
  dim: Dim | null
  /** Display factor of the cell (what its numbers are shown in). */
  factor: number
  unit: string | undefined
}

function series(env: Env, name: string, role: string): Series {
  const p = env.cellNamed(name)
  if (!p) throw new CellError(`the ${role} cell ${name} is not a cell of this sheet`, 'name')
  const v = env.valueOf(p.id)
  if (v === undefined) throw new CellError(`the ${role} cell ${name} has no value`, 'input')
  const num = asNum(v, role)
  const values = typeof num === 'number' ? Float64Array.of(num) : num
  const dim = env.stateOf(p.id)?.dim ?? null
  const unitText = 'unit' in p.cell ? (p.cell.unit as string | undefined) : undefined
  const shown = displayFor(unitText, dim)
  return { prepared: p, values, dim, factor: shown.factor, unit: shown.unit }
}

/** The unit fitted energies are shown in, and its SI factor. */
function energyUnit(cell: FitCell, x: Series): { unit: string; factor: number } {
  const wanted = cell.unit ?? (x.dim && dimEquals(x.dim, ENERGY) && x.unit ? x.unit : 'J')
  const u = parseUnit(wanted)
  if (!u.ok) throw new CellError(`the fit unit ${u.error}`, 'input')
  if (!dimEquals(u.dim, ENERGY))
    throw new CellError(`the fit unit ${wanted} is for ${dimPhrase(u.dim, false)}, but fitted energies need an energy unit, such as eV or meV`, 'input')
  return { unit: wanted, factor: u.factor }
}

function windowOf(cell: FitCell, x: Series): [number, number] {
  let lo = Infinity
  let hi = -Infinity
  for (const v of x.values) if (Number.isFinite(v)) {
    lo = Math.min(lo, v)
    hi = Math.max(hi, v)
  }
  const a = cell.from !== undefined ? cell.from * x.factor : lo
  const b = cell.to !== undefined ? cell.to * x.factor : hi
  // the ends are inclusive as the user reads them: a grid point shown as 1.6 eV may differ from 1.6·e in the last bit
  const slack = 1e-9 * Math.abs(b - a)
  return a <= b ? [a - slack, b + slack] : [a + slack, b - slack]
}

/**
 * Throws a CellError, in the x cell's own display unit, when the window holds fewer than `needed` points of x: what
 * was asked, how many points fell inside, and the range x covers (the usual slip is a window in another unit).
 */
function requirePoints(cell: FitCell, x: Series, lo: number, hi: number, needed: number, what: string): void {
  const [a, b] = [Math.min(lo, hi), Math.max(lo, hi)]
  let inside = 0
  let first = Infinity
  let last = -Infinity
  for (const v of x.values) {
    if (!Number.isFinite(v)) continue
    if (v >= a && v <= b) inside++
    first = Math.min(first, v)
    last = Math.max(last, v)
  }
  if (inside >= needed) return
  // the window ends echo what was typed; the data's range is computed
  const typed = (v: number): string => formatNumber(v / x.factor, INPUT_DIGITS)
  const data = (v: number): string => formatNumber(v / x.factor, MESSAGE_DIGITS)
  const unit = x.unit ? ` ${x.unit}` : ''
  const range = Number.isFinite(first) ? `, which run from ${data(first)} to ${data(last)}${unit}` : ''
  const advice = inside === 0 && x.unit ? `: move the window onto the data (from and to are in ${x.unit}, the unit of ${cell.x})` : ': widen the window'
  throw new CellError(
    cell.from === undefined && cell.to === undefined
      ? `the x cell ${cell.x} has only ${inside} finite point${inside === 1 ? '' : 's'}; ${what} needs at least ${needed}`
      : `the window ${typed(lo)} to ${typed(hi)}${unit} holds ${inside} of the ${x.values.length} points of ${cell.x}${range}; ${what} needs at least ${needed}${advice}`,
    'fit',
  )
}

/**
 * Runs a band-edge fit; when it fails, looks for the usual cause — a point inside the window where α is not a finite
 * number, negative, or (for Urbach) zero — and names it in the cells' own units. Other failures keep the fitting
 * library's sentence. Only a failed fit pays for the search.
 */
function withWindowCheck<T>(cell: FitCell, x: Series, y: Series, lo: number, hi: number, fit: () => T): T {
  try {
    return fit()
  } catch (err) {
    const [a, b] = [Math.min(lo, hi), Math.max(lo, hi)]
    const urbach = cell.method === 'urbach'
    for (let i = 0; i < x.values.length; i++) {
      const v = x.values[i]
      const alpha = y.values[i]
      if (!(v >= a && v <= b)) continue
      const bad = !Number.isFinite(alpha) ? 'not a finite number' : alpha < 0 ? 'negative' : urbach && alpha === 0 ? 'zero' : ''
      if (!bad) continue
      const at = `${formatNumber(v / x.factor)}${x.unit ? ` ${x.unit}` : ''}`
      const value = Number.isFinite(alpha) && alpha !== 0 ? ` (${formatNumber(alpha / y.factor)}${y.unit ? ` ${y.unit}` : ''})` : ''
      const need = urbach
        ? 'an Urbach fit takes its logarithm, so α must be a finite number above zero throughout the window'
        : 'a Tauc fit needs a finite α of zero or more throughout the window'
      throw new CellError(`the y cell ${cell.y} is ${bad}${value} at ${cell.x} = ${at}, inside the window; ${need}: move the window or fix the data there`, 'fit')
    }
    throw err
  }
}

/** The σ cell of a weighted fit, checked against y: same length, y's dimension, above zero inside the window. */
function sigmaSeries(cell: FitCell, env: Env, x: Series, y: Series, lo: number, hi: number): Series | undefined {
  if (!cell.sigma) return undefined
  const s = series(env, cell.sigma, 'sigma')
  if (s.values.length !== y.values.length)
    throw new CellError(`the σ cell ${cell.sigma} has ${s.values.length} values but the y cell ${cell.y} has ${y.values.length}; give one standard deviation per point`, 'input')
  if (s.dim && y.dim && !dimEquals(s.dim, y.dim))
    throw new CellError(`the σ cell ${cell.sigma} is ${dimPhrase(s.dim)} but the y cell ${cell.y} is ${dimPhrase(y.dim)}; standard deviations are in y's units`, 'input')
  const [a, b] = [Math.min(lo, hi), Math.max(lo, hi)]
  for (let i = 0; i < x.values.length; i++) {
    const v = x.values[i]
    if (!(v >= a && v <= b) || (s.values[i] > 0 && Number.isFinite(s.values[i]))) continue
    const at = `${formatNumber(v / x.factor)}${x.unit ? ` ${x.unit}` : ''}`
    throw new CellError(`the σ cell ${cell.sigma} is ${Number.isFinite(s.values[i]) ? formatNumber(s.values[i] / s.factor) : 'not a finite number'} at ${cell.x} = ${at}, inside the window; every point of a weighted fit needs a standard deviation above zero`, 'fit')
  }
  return s
}

/** "1/cm" → "cm" (the length of an inverse-length unit), or undefined. */
function lengthOfInverse(unit: string): string | undefined {
  const m = /^\s*1\s*\/\s*([A-Za-zµ]+)\s*$/.exec(unit) ?? /^\s*([A-Za-zµ]+)\s*\^\s*-1\s*$/.exec(unit)
  return m?.[1]
}

function powerText(unit: string, e: number): string {
  if (e === 1) return unit
  return `${unit}^${Number.isInteger(e) ? e : Number(e.toPrecision(6))}`
}

/**
 * The unit of a Tauc slope B in the x and y cells' display units, and the factor from SI: (αE)^(1/r) = B·(E − Eg)
 * makes B's unit (yu·xu)^(1/r)/xu, written xu^(1/r − 1)/L^(1/r) when y is an inverse length 1/L: eV/cm^2 for r = 1/2.
 */
export function taucSlopeDisplay(r: number, x: { unit: string | undefined; factor: number }, y: { unit: string | undefined; factor: number }): { unit: string; factor: number } {
  const p = 1 / r
  const factor = Math.pow(y.factor * x.factor, p) / x.factor
  const xu = x.unit ?? 'J'
  const yu = y.unit ?? '1/m'
  const L = lengthOfInverse(yu)
  if (!L) return { unit: `(${yu}*${xu})^${Number(p.toPrecision(6))}/${xu}`, factor }
  const num: string[] = []
  const den: string[] = []
  const put = (u: string, e: number) => {
    if (Math.abs(e) < 1e-12) return
    if (e > 0) num.push(powerText(u, e))
    else den.push(powerText(u, -e))
  }
  put(xu, p - 1)
  put(L, -p)
  const top = num.length ? num.join('*') : '1'
  const bottom = den.length === 0 ? '' : den.length === 1 ? `/${den[0]}` : `/(${den.join('*')})`
  return { unit: top + bottom, factor }
}

/** A unit squared, with parentheses when it is compound: mA → mA^2, 1/cm → (1/cm)^2. */
function squared(unit: string | undefined): string {
  if (!unit) return '1'
  return /[/*^ ]/.test(unit) ? `(${unit})^2` : `${unit}^2`
}

function field(value: Num, dim: Dim | null): Field {
  return { value, dim }
}

export function evaluateFit(p: PreparedCell, env: Env): CellState {
  const cell = p.cell as FitCell
  if (cell.method === 'model') return modelFit(cell, env)
  const x = series(env, cell.x, 'x')
  const y = series(env, cell.y, 'y')
  const warnings: string[] = []
  if (x.dim && !dimEquals(x.dim, ENERGY)) {
    const hint = dimEquals(x.dim, LENGTH) ? `; fit against a formula cell photon_energy(${cell.x}) instead` : ''
    warnings.push(`the x cell ${cell.x} should be a photon energy (eV), not ${dimPhrase(x.dim)}${hint}`)
  }
  if (y.dim && !dimEquals(y.dim, INV_LENGTH))
    warnings.push(`the y cell ${cell.y} should be an absorption coefficient, an inverse length (1/cm), not ${dimPhrase(y.dim)}`)
  if (x.values.length !== y.values.length)
    throw new CellError(`the x cell ${cell.x} has ${x.values.length} values but the y cell ${cell.y} has ${y.values.length}; fit two cells of one length`, 'input')
  const e = energyUnit(cell, x)
  const [lo, hi] = windowOf(cell, x)
  requirePoints(cell, x, lo, hi, 3, cell.method === 'tauc' ? 'a Tauc fit' : 'an Urbach fit')
  const sigma = sigmaSeries(cell, env, x, y, lo, hi)
  const yUnit = y.unit ?? '1/m'
  if (cell.method === 'tauc') {
    const r = cell.r ?? 0.5
    if (cell.r === undefined) warnings.push('r is not given: using r = 1/2 (direct allowed transition); set r = 2 for an indirect allowed one')
    const f = withWindowCheck(cell, x, y, lo, hi, () => taucFit(x.values, y.values, r, lo, hi, sigma?.values))
    if (f.r2 < 0.99)
      warnings.push(`the Tauc plot is not straight in this window (r² = ${formatNumber(f.r2)}): move the window onto the linear part of the edge`)
    if (f.Eg > Math.min(lo, hi))
      warnings.push(`the fitted gap lies inside the window (at ${formatNumber(f.Eg / e.factor)} ${e.unit}): the window probably reaches into the tail below the gap; start it above the gap`)
    const bDim = dimDiv(dimPow(dimMul(INV_LENGTH, ENERGY), 1 / r), ENERGY)
    const fields = new Map<string, Field>([
      ['Eg', field(f.Eg, ENERGY)], ['Eg_err', field(f.Eg_err, ENERGY)], ['B', field(f.B, bDim)],
      ['B_err', field(f.B_err, bDim)], ['r2', field(f.r2, DIMENSIONLESS)], ['n', field(f.n, DIMENSIONLESS)],
    ])
    const b = taucSlopeDisplay(r, x, { unit: yUnit, factor: y.factor })
    const shown: Record<string, number> = {
      Eg: clean(f.Eg / e.factor), Eg_err: clean(f.Eg_err / e.factor), B: clean(f.B / b.factor), B_err: clean(f.B_err / b.factor), r2: f.r2, n: f.n,
    }
    const units: Record<string, string> = { Eg: e.unit, Eg_err: e.unit, B: b.unit, B_err: b.unit, r2: '1', n: '1' }
    weightedOutputs(f, fields, shown, units)
    return { status: 'ok', value: new RecordValue('fit', cell.name, fields), dim: null, warnings, shown, unit: e.unit, units }
  }
  const f = withWindowCheck(cell, x, y, lo, hi, () => urbachFit(x.values, y.values, lo, hi, sigma?.values))
  if (f.r2 < 0.98)
    warnings.push(`ln α is not straight in this window (r² = ${formatNumber(f.r2)}): an Urbach tail is exponential only below the gap; move the window below the gap`)
  const fields = new Map<string, Field>([
    ['Eu', field(f.Eu, ENERGY)], ['Eu_err', field(f.Eu_err, ENERGY)], ['alpha0', field(f.alpha0, INV_LENGTH)],
    ['E0', field(f.E0, ENERGY)], ['r2', field(f.r2, DIMENSIONLESS)], ['n', field(f.n, DIMENSIONLESS)],
  ])
  const shown: Record<string, number> = {
    Eu: clean(f.Eu / e.factor), Eu_err: clean(f.Eu_err / e.factor), alpha0: clean(f.alpha0 / y.factor), E0: clean(f.E0 / e.factor), r2: f.r2, n: f.n,
  }
  const units: Record<string, string> = { Eu: e.unit, Eu_err: e.unit, alpha0: yUnit, E0: e.unit, r2: '1', n: '1' }
  weightedOutputs(f, fields, shown, units)
  return { status: 'ok', value: new RecordValue('fit', cell.name, fields), dim: null, warnings, shown, unit: e.unit, units }
}

/** A weighted edge fit's χ² and reduced χ² (dimensionless), added to its outputs. */
function weightedOutputs(f: { chi2?: number; reducedChi2?: number }, fields: Map<string, Field>, shown: Record<string, number>, units: Record<string, string>): void {
  if (f.chi2 === undefined || f.reducedChi2 === undefined) return
  fields.set('chi2', field(f.chi2, DIMENSIONLESS))
  fields.set('reducedChi2', field(f.reducedChi2, DIMENSIONLESS))
  shown.chi2 = f.chi2
  shown.reducedChi2 = f.reducedChi2
  units.chi2 = '1'
  units.reducedChi2 = '1'
}

interface FreeParameter {
  name: string
  id: string
  factor: number
  dim: Dim
  unit: string | undefined
  start: number
  min?: number
  max?: number
}

/**
 * A free parameter's start value and bounds, checked in its cell's unit before the fit runs (the fitting library
 * would report them in SI): finite, bounds in order, start inside them.
 */
function checkStartAndBounds(name: string, start: number, min: number | undefined, max: number | undefined, unitText?: string): void {
  const unit = unitText ? ` ${unitText}` : ''
  if (!Number.isFinite(start)) throw new CellError(`the start value of ${name} is not a finite number; give it a start value`, 'input')
  if (min !== undefined && max !== undefined && min > max) {
    const [lo, hi] = formatPair(min, max)
    throw new CellError(`the bounds of ${name} are reversed: min ${lo}${unit} is above max ${hi}${unit}; swap them`, 'input')
  }
  const below = min !== undefined && start < min
  if (below || (max !== undefined && start > max)) {
    const [s, b] = formatPair(start, below ? (min as number) : (max as number))
    throw new CellError(
      `the start value ${s}${unit} of ${name} is ${below ? 'below its minimum' : 'above its maximum'} ${b}${unit}; start inside the bounds or widen them`,
      'input',
    )
  }
}

function modelFit(cell: FitCell, env: Env): CellState {
  const model = env.cellNamed(cell.model as string)
  if (!model || model.kind !== 'formula') throw new CellError(`the model ${cell.model} must be a formula cell`, 'input')
  const x = series(env, cell.x, 'x')
  const y = series(env, cell.y, 'y')
  if (x.values.length !== y.values.length)
    throw new CellError(`the x cell ${cell.x} has ${x.values.length} values but the y cell ${cell.y} has ${y.values.length}; fit two cells of one length`, 'input')
  const free: FreeParameter[] = (cell.parameters ?? []).map((q) => {
    const pc = env.cellNamed(q.name)
    if (!pc || pc.kind !== 'parameter') throw new CellError(`the free parameter ${q.name} must be a parameter cell`, 'input')
    const param = pc.cell as ParameterCell
    const { dim } = parameterValue(param)
    const u = parseUnit(param.unit ?? '')
    const factor = u.ok ? u.factor : 1
    checkStartAndBounds(q.name, q.start ?? param.value, q.min, q.max, param.unit)
    return {
      name: q.name, id: pc.id, factor, dim, unit: param.unit, start: (q.start ?? param.value) * factor,
      min: q.min === undefined ? undefined : q.min * factor, max: q.max === undefined ? undefined : q.max * factor,
    }
  })
  const chain = env.chain(free.map((f) => f.id), [model.id])
  if (!chain.includes(model.id)) throw new CellError(`the model ${cell.model} does not depend on any of the free parameters`, 'input')
  const [lo, hi] = windowOf(cell, x)
  requirePoints(cell, x, lo, hi, free.length + 1, `a model fit of ${free.length} parameter${free.length === 1 ? '' : 's'}`)
  const [a, b] = [Math.min(lo, hi), Math.max(lo, hi)]
  const picked: number[] = []
  x.values.forEach((v, i) => {
    if (v >= a && v <= b) picked.push(i)
  })
  const yWindow = Float64Array.from(picked, (i) => y.values[i])
  const sigma = sigmaSeries(cell, env, x, y, lo, hi)
  const weights = sigma ? Float64Array.from(picked, (i) => 1 / (sigma.values[i] * sigma.values[i])) : undefined
  const e = cell.unit ? energyUnit(cell, x) : undefined
  const warnings: string[] = []
  const modelState = env.stateOf(model.id)
  if (y.dim && modelState?.dim && !dimEquals(y.dim, modelState.dim))
    warnings.push(`the model ${cell.model} is ${dimPhrase(modelState.dim)} but the y cell ${cell.y} is ${dimPhrase(y.dim)}; the model should give what y measures`)

  let evaluations = 0
  const evaluate = (params: number[]): Float64Array => {
    const overrides = new Map<string, Value>(free.map((f, k) => [f.id, params[k]]))
    env.runChain(chain, overrides)
    const v = overrides.get(model.id)
    const m = asNum(v as Value, 'model')
    if (typeof m === 'number') return new Float64Array(picked.length).fill(m)
    if (m.length !== x.values.length)
      throw new CellError(`the model ${cell.model} has ${m.length} values but the x cell ${cell.x} has ${x.values.length}; the model should give one value per x`, 'input')
    if (++evaluations % 20 === 0) env.progress(Math.min(0.99, evaluations / 400))
    return Float64Array.from(picked, (i) => m[i])
  }
  let fit: ReturnType<typeof fitModel>
  try {
    fit = fitModel({
      evaluate, y: yWindow, start: free.map((f) => f.start), min: free.map((f) => f.min ?? -Infinity),
      max: free.map((f) => f.max ?? Infinity), names: free.map((f) => f.name), weights, absoluteSigma: !!weights,
      timeBudgetMs: Number.isFinite(env.budget.remainingMs()) ? env.budget.remainingMs() : undefined,
    })
  } catch (err) {
    // a fit stopped by the cell's time budget (the fitting keeps its own clock) says so in the engine's words, with
    // the budget as set rather than the milliseconds that were left when the fit began
    if (env.budget.remainingMs() < 2) throw env.budget.overrun()
    throw err
  }
  if (!fit.converged)
    warnings.push(`the fit stopped after ${fit.iterations} iterations without converging; try start values closer to the result, or bounds on the free parameters`)
  const shown: Record<string, unknown> = {}
  const units: Record<string, string> = {}
  const fields = new Map<string, Field>()
  free.forEach((f, k) => {
    const energy = e && dimEquals(f.dim, ENERGY)
    const showFactor = energy ? e.factor : f.factor
    shown[f.name] = clean(fit.params[k] / showFactor)
    shown[`${f.name}_err`] = clean(fit.errors[k] / showFactor)
    const unit = (energy ? e.unit : f.unit) || siUnit(f.dim) || '1'
    units[f.name] = unit
    units[`${f.name}_err`] = unit
    fields.set(f.name, field(fit.params[k], f.dim))
    fields.set(`${f.name}_err`, field(fit.errors[k], f.dim))
  })
  const yDim = y.dim
  // weighted: χ² = Σ((y − f)/σ)² is a plain number; unweighted: Σ(y − f)², shown in the y cell's unit squared
  const chi2Dim = weights ? DIMENSIONLESS : yDim ? dimPow(yDim, 2) : null
  const chi2Factor = weights ? 1 : y.factor * y.factor
  const chi2Unit = weights ? '1' : squared(y.unit)
  Object.assign(shown, {
    chi2: clean(fit.chi2 / chi2Factor), reducedChi2: clean(fit.reducedChi2 / chi2Factor),
    residuals: Array.from(fit.residuals, (v) => clean(v / y.factor)), iterations: fit.iterations, converged: fit.converged, n: picked.length,
  })
  Object.assign(units, { chi2: chi2Unit, reducedChi2: chi2Unit, residuals: y.unit ?? '1', iterations: '1', n: '1' })
  fields.set('chi2', field(fit.chi2, chi2Dim))
  fields.set('reducedChi2', field(fit.reducedChi2, chi2Dim))
  fields.set('residuals', field(fit.residuals, yDim))
  fields.set('iterations', field(fit.iterations, DIMENSIONLESS))
  fields.set('n', field(picked.length, DIMENSIONLESS))
  return { status: 'ok', value: new RecordValue('fit', cell.name, fields), dim: null, warnings, shown, unit: e?.unit, units }
}
