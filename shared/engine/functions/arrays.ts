/**
 * The "grids and arrays" group of the function library (DESIGN §6): grids, reductions, selection, interpolation,
 * trapezoid integrals, derivatives and level crossings, on whole Float64Arrays. Units pass through unchanged (all
 * values are SI), so `integrate(y, x)` of a spectral irradiance in W/m³ over a wavelength in m gives W/m².
 */
import type { Num } from '../../optics/num'
import { INPUT_DIGITS, formatNumber } from '../describe'
import { CellError, OutsideDataError } from '../errors'

function fail(fn: string, message: string): never {
  throw new CellError(`${fn}: ${message}`, 'value')
}

function array(fn: string, name: string, a: Num): Float64Array {
  if (typeof a === 'number') fail(fn, `${name} must be an array, not a single number`)
  return a
}

function count(fn: string, name: string, n: Num, min: number, max: number): number {
  if (typeof n !== 'number') fail(fn, `${name} must be a single number`)
  if (!Number.isInteger(n)) fail(fn, `${name} must be a whole number, not ${formatNumber(n, INPUT_DIGITS)}`)
  if (n < min) fail(fn, `${name} must be at least ${min}`)
  if (n > max)
    throw new CellError(`${fn}: ${n.toLocaleString('en-US')} points exceed the limit of ${max.toLocaleString('en-US')} elements in one array; use fewer points`, 'limit')
  return n
}

function scalar(fn: string, name: string, x: Num): number {
  if (typeof x !== 'number') fail(fn, `${name} must be a single number`)
  if (!Number.isFinite(x)) fail(fn, `${name} must be a finite number, not ${formatNumber(x)}`)
  return x
}

function sameLength(fn: string, names: [string, string], a: Float64Array, b: Float64Array): void {
  if (a.length !== b.length) fail(fn, `${names[0]} has ${a.length} values but ${names[1]} has ${b.length}`)
}

/**
 * `grid(from, to, n)`: n equally spaced values from `from` to `to`, both included.
 * Units: from and to in the same unit (SI), result in that unit. Range: n a whole number, 2 ≤ n ≤ the element limit.
 * Source: definition (from + i·(to − from)/(n − 1), the last point set to `to` exactly).
 * Example: grid(1, 2, 5) → [1, 1.25, 1.5, 1.75, 2].
 */
export function grid(from: Num, to: Num, n: Num, maxElements: number): Float64Array {
  const a = scalar('grid', 'from', from)
  const b = scalar('grid', 'to', to)
  const m = count('grid', 'n', n, 2, maxElements)
  const out = new Float64Array(m)
  const step = (b - a) / (m - 1)
  for (let i = 0; i < m; i++) out[i] = a + i * step
  out[m - 1] = b
  return out
}

/**
 * `loggrid(from, to, n)`: n values from `from` to `to` with equal ratios between neighbours (both included).
 * Units as grid. Range: from and to of the same sign and non-zero; 2 ≤ n ≤ the element limit.
 * Source: definition; the values are 10^(log10|from| + i·step), so a grid over whole decades lands exactly on the
 * powers of ten.
 * Example: loggrid(1, 1000, 4) → [1, 10, 100, 1000]; loggrid(1*nm, 1000*nm, 4) shown in nm → [1, 10, 100, 1000].
 */
export function loggrid(from: Num, to: Num, n: Num, maxElements: number): Float64Array {
  const a = scalar('loggrid', 'from', from)
  const b = scalar('loggrid', 'to', to)
  const m = count('loggrid', 'n', n, 2, maxElements)
  if (a === 0 || b === 0 || Math.sign(a) !== Math.sign(b)) fail('loggrid', 'from and to must be non-zero and of the same sign')
  const out = new Float64Array(m)
  const la = Math.log10(Math.abs(a))
  const step = (Math.log10(Math.abs(b)) - la) / (m - 1)
  const s = Math.sign(a)
  for (let i = 0; i < m; i++) out[i] = s * 10 ** (la + i * step)
  out[0] = a
  out[m - 1] = b
  return out
}

/**
 * `len(a)`: number of elements; 1 for a single number.
 * Units: any argument; the result is a dimensionless count. Range: any array. Source: definition.
 * Example: len(grid(0, 1, 11)) → 11.
 */
export function len(a: Num): number {
  return typeof a === 'number' ? 1 : a.length
}

/**
 * `sum(a)`: sum of all elements (NaN if any is NaN); a single number is its own sum.
 * Units: the result is in the unit of a. Range: any array (an empty one sums to 0). Source: definition.
 * Example: sum([1, 2, 3]) → 6.
 */
export function sum(a: Num): number {
  if (typeof a === 'number') return a
  let s = 0
  for (let i = 0; i < a.length; i++) s += a[i]
  return s
}

/**
 * `mean(a)`: arithmetic mean of the elements (NaN if any is NaN).
 * Units: the result is in the unit of a. Range: a non-empty array or a number. Source: definition.
 * Example: mean([1, 2, 6]) → 3.
 */
export function mean(a: Num): number {
  if (typeof a === 'number') return a
  if (a.length === 0) fail('mean', 'the array is empty')
  return sum(a) / a.length
}

/**
 * `min(a)`: smallest element of one array; `min(a, b, …)`: element-wise smallest of several arguments (broadcast).
 * NaN elements are ignored by the one-argument form; the several-argument form gives NaN where any argument is NaN.
 * Units: those of the arguments (all alike). Range: a non-empty array, or arrays of one length and numbers.
 * Source: definition. Example: min([3, 1, 2]) → 1.
 */
export function min(args: Num[]): Num {
  return extreme('min', args, (x, y) => x < y)
}

/**
 * `max(a)` / `max(a, b, …)`: as min, largest. Units: those of the arguments (all alike). Range: as min.
 * Source: definition. Example: max([3, 1, 2]) → 3; max([1, 5], 2) → [2, 5].
 */
export function max(args: Num[]): Num {
  return extreme('max', args, (x, y) => x > y)
}

function extreme(fn: string, args: Num[], better: (x: number, y: number) => boolean): Num {
  if (args.length === 1) {
    const a = args[0]
    if (typeof a === 'number') return a
    let best = NaN
    for (let i = 0; i < a.length; i++) {
      const x = a[i]
      if (Number.isNaN(x)) continue
      if (Number.isNaN(best) || better(x, best)) best = x
    }
    if (a.length === 0) fail(fn, 'the array is empty')
    return best
  }
  let n = -1
  for (const a of args) {
    if (typeof a === 'number') continue
    if (n >= 0 && a.length !== n) fail(fn, `arguments have different lengths (${n} and ${a.length})`)
    n = a.length
  }
  const pick = (i: number): number => {
    let best = NaN
    for (const a of args) {
      const x = typeof a === 'number' ? a : a[i]
      if (Number.isNaN(x)) return NaN
      if (Number.isNaN(best) || better(x, best)) best = x
    }
    return best
  }
  if (n < 0) return pick(0)
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) out[i] = pick(i)
  return out
}

/**
 * `first(a)`: the first element. Units: those of a. Range: a non-empty array or a number. Source: definition.
 * Example: first([4, 5, 6]) → 4.
 */
export function first(a: Num): number {
  if (typeof a === 'number') return a
  if (a.length === 0) fail('first', 'the array is empty')
  return a[0]
}

/**
 * `last(a)`: the last element. Units: those of a. Range: a non-empty array or a number. Source: definition.
 * Example: last([4, 5, 6]) → 6.
 */
export function last(a: Num): number {
  if (typeof a === 'number') return a
  if (a.length === 0) fail('last', 'the array is empty')
  return a[a.length - 1]
}

/**
 * `at(a, i)`: element i of a, counting from 0; a negative i counts from the end (−1 is the last). i may be an array
 * of indices (the result then has one element per index): at(grid(a, b, n), 0) is a and at(grid(a, b, n), n − 1)
 * is b. Units: those of a. Range: whole i with −len(a) ≤ i < len(a). Source: definition.
 * Example: at([4, 5, 6], 0) → 4; at([4, 5, 6], 1) → 5; at([4, 5, 6], -1) → 6.
 */
export function at(a: Num, i: Num): Num {
  const arr = typeof a === 'number' ? Float64Array.of(a) : a
  const one = (k: number): number => {
    if (!Number.isInteger(k)) fail('at', `the index must be a whole number, not ${formatNumber(k, INPUT_DIGITS)}`)
    const j = k < 0 ? arr.length + k : k
    if (j < 0 || j >= arr.length)
      fail('at', arr.length === 0 ? 'the array is empty' : `index ${k} is outside 0…${arr.length - 1} (the array has ${arr.length} element${arr.length === 1 ? '' : 's'}; -1 is the last)`)
    return arr[j]
  }
  if (typeof i === 'number') return one(i)
  const out = new Float64Array(i.length)
  for (let k = 0; k < i.length; k++) out[k] = one(i[k])
  return out
}

/**
 * `where(cond, a, b)`: element-wise choice, a where cond is true (non-zero), b elsewhere; scalars broadcast.
 * Units: a and b alike, the result in that unit; cond any (non-zero and not NaN is true). Range: arrays of one
 * length, or numbers. Source: definition (element-wise selection). Example: where([1, 0, 1], 5, [7, 8, 9]) → [5, 8, 5].
 */
export function where(cond: Num, a: Num, b: Num): Num {
  const n = [cond, a, b].reduce<number>((m, x) => {
    if (typeof x === 'number') return m
    if (m >= 0 && x.length !== m) fail('where', `arguments have different lengths (${m} and ${x.length})`)
    return x.length
  }, -1)
  const pickAt = (i: number): number => {
    const c = typeof cond === 'number' ? cond : cond[i]
    const src = c !== 0 && !Number.isNaN(c) ? a : b
    return typeof src === 'number' ? src : src[i]
  }
  if (n < 0) return pickAt(0)
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) out[i] = pickAt(i)
  return out
}

/**
 * `clip(x, lo, hi)`: x limited to [lo, hi], element-wise (min(max(x, lo), hi)); scalars broadcast.
 * Units: x, lo and hi alike; the result in that unit. Range: lo ≤ hi. Source: definition.
 * Example: clip([-1, 0.5, 3], 0, 1) → [0, 0.5, 1].
 */
export function clip(x: Num, lo: Num, hi: Num): Num {
  return min([max([x, lo]), hi])
}

/**
 * `interpolate(xq, x, y)`: linear interpolation of the samples (x, y) at xq. x must be monotonic, increasing or
 * decreasing (photon energies of a wavelength grid decrease). No extrapolation: a single point outside the range of
 * x, or an array of points all outside it, is an error giving that range; an array partly outside is NaN there. Units: xq and x alike; result in the unit of y. Range: x strictly monotonic, at least 2 points,
 * as long as y. Source: piecewise-linear interpolation (e.g. Press et al., Numerical Recipes, 3rd ed., §3.1).
 * Example: interpolate(1.5, [1, 2], [10, 20]) → 15.
 */
export function interpolate(xq: Num, x: Num, y: Num): Num {
  const xs = array('interpolate', 'x', x)
  const ys = array('interpolate', 'y', y)
  sameLength('interpolate', ['x', 'y'], xs, ys)
  const n = xs.length
  if (n < 2) fail('interpolate', 'x needs at least 2 points')
  const increasing = xs[n - 1] > xs[0]
  for (let i = 1; i < n; i++) {
    const step = xs[i] - xs[i - 1]
    if (!(increasing ? step > 0 : step < 0)) fail('interpolate', `x must be strictly ${increasing ? 'increasing' : 'decreasing'} (it is not at index ${i})`)
  }
  const lo = increasing ? xs[0] : xs[n - 1]
  const hi = increasing ? xs[n - 1] : xs[0]
  const inside = (q: number): boolean => q >= lo && q <= hi
  if (typeof xq === 'number' ? !inside(xq) : xq.length > 0 && !xq.some(inside)) {
    const q = typeof xq === 'number' ? xq : xq[0]
    throw new OutsideDataError(q, lo, hi)
  }
  const one = (q: number): number => {
    if (!inside(q)) return NaN
    // binary search for the interval holding q
    let a = 0
    let b = n - 1
    while (b - a > 1) {
      const mid = (a + b) >> 1
      if ((xs[mid] <= q) === increasing) a = mid
      else b = mid
    }
    const t = (q - xs[a]) / (xs[b] - xs[a])
    return ys[a] + t * (ys[b] - ys[a])
  }
  if (typeof xq === 'number') return one(xq)
  const out = new Float64Array(xq.length)
  for (let i = 0; i < xq.length; i++) out[i] = one(xq[i])
  return out
}

/**
 * `integrate(y, x)`: trapezoid rule ∫y dx over the samples, in the order given (a decreasing x gives the negative).
 * Units: unit of y times unit of x. Range: x an array, y an array as long or a number. Source: the composite
 * trapezoid rule (e.g. Press et al., Numerical Recipes, 3rd ed., §4.1). Example: integrate([0, 1, 2], [0, 1, 2]) → 2.
 */
export function integrate(y: Num, x: Num): number {
  const xs = array('integrate', 'x', x)
  const ys = typeof y === 'number' ? new Float64Array(xs.length).fill(y) : y
  sameLength('integrate', ['y', 'x'], ys, xs)
  let s = 0
  for (let i = 1; i < xs.length; i++) s += 0.5 * (ys[i] + ys[i - 1]) * (xs[i] - xs[i - 1])
  return s
}

/**
 * `cumulative(y, x)`: running trapezoid integral, 0 at the first sample, the full integrate(y, x) at the last.
 * Units as integrate. Range: x an array, y an array as long or a number. Source: the composite trapezoid rule
 * (Press et al., Numerical Recipes, 3rd ed., §4.1), summed interval by interval. Example: cumulative([1, 1, 1], [0, 1, 3]) → [0, 1, 3].
 */
export function cumulative(y: Num, x: Num): Float64Array {
  const xs = array('cumulative', 'x', x)
  const ys = typeof y === 'number' ? new Float64Array(xs.length).fill(y) : y
  sameLength('cumulative', ['y', 'x'], ys, xs)
  const out = new Float64Array(xs.length)
  for (let i = 1; i < xs.length; i++) out[i] = out[i - 1] + 0.5 * (ys[i] + ys[i - 1]) * (xs[i] - xs[i - 1])
  return out
}

/**
 * `slope(y, x)`: derivative dy/dx at each sample: second-order central differences for uneven spacing inside,
 * one-sided differences at the two ends. Source: the three-point stencil of B. Fornberg, Math. Comp. 51, 699 (1988).
 * Units: unit of y over unit of x. Range: x and y arrays of one length, at least 2 points, x without repeats. Exact
 * for quadratics inside. Example: slope([0, 1, 4, 9], [0, 1, 2, 3]) →
 * [1, 2, 4, 5].
 */
export function slope(y: Num, x: Num): Float64Array {
  const xs = array('slope', 'x', x)
  const ys = array('slope', 'y', y)
  sameLength('slope', ['y', 'x'], ys, xs)
  const n = xs.length
  if (n < 2) fail('slope', 'needs at least 2 points')
  const out = new Float64Array(n)
  out[0] = (ys[1] - ys[0]) / (xs[1] - xs[0])
  out[n - 1] = (ys[n - 1] - ys[n - 2]) / (xs[n - 1] - xs[n - 2])
  for (let i = 1; i < n - 1; i++) {
    const h1 = xs[i] - xs[i - 1]
    const h2 = xs[i + 1] - xs[i]
    out[i] = (h1 * h1 * ys[i + 1] - h2 * h2 * ys[i - 1] + (h2 * h2 - h1 * h1) * ys[i]) / (h1 * h2 * (h1 + h2))
  }
  return out
}

/**
 * `crossing(x, y, level)`: the first x where y reaches `level`, interpolated linearly between the two samples that
 * straddle it; NaN when y never reaches it. Units: level in the unit of y; result in the unit of x.
 * Range: x and y arrays of one length, level a finite number. Source: linear interpolation between the bracketing
 * samples (definition). Example: crossing([0, 1, 2], [0, 10, 20], 15) → 1.5.
 */
export function crossing(x: Num, y: Num, level: Num): number {
  const xs = array('crossing', 'x', x)
  const ys = array('crossing', 'y', y)
  sameLength('crossing', ['x', 'y'], xs, ys)
  const L = scalar('crossing', 'level', level)
  for (let i = 0; i < xs.length; i++) {
    const d1 = ys[i] - L
    if (d1 === 0) return xs[i]
    if (i + 1 < xs.length) {
      const d2 = ys[i + 1] - L
      if (d1 * d2 < 0) return xs[i] + (xs[i + 1] - xs[i]) * (d1 / (d1 - d2))
    }
  }
  return NaN
}
