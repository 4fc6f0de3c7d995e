/**
 * Broadcasting helpers with fixed arity, for the less busy physics functions. They avoid the argument spread of
 * `mapN`; the hot functions (alphaEdge, the slab formulas) carry their own loops instead.
 */
import type { Num } from './num'
import { broadcastLength } from './num'

export function map3(a: Num, b: Num, c: Num, f: (a: number, b: number, c: number) => number): Num {
  const n = broadcastLength(a, b, c)
  if (n < 0) return f(a as number, b as number, c as number)
  const A = typeof a === 'number' ? null : a
  const B = typeof b === 'number' ? null : b
  const C = typeof c === 'number' ? null : c
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) out[i] = f(A ? A[i] : (a as number), B ? B[i] : (b as number), C ? C[i] : (c as number))
  return out
}

export function map4(a: Num, b: Num, c: Num, d: Num, f: (a: number, b: number, c: number, d: number) => number): Num {
  const n = broadcastLength(a, b, c, d)
  if (n < 0) return f(a as number, b as number, c as number, d as number)
  const A = typeof a === 'number' ? null : a
  const B = typeof b === 'number' ? null : b
  const C = typeof c === 'number' ? null : c
  const D = typeof d === 'number' ? null : d
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    out[i] = f(A ? A[i] : (a as number), B ? B[i] : (b as number), C ? C[i] : (c as number), D ? D[i] : (d as number))
  }
  return out
}

export function map5(
  a: Num, b: Num, c: Num, d: Num, e: Num,
  f: (a: number, b: number, c: number, d: number, e: number) => number,
): Num {
  const n = broadcastLength(a, b, c, d, e)
  if (n < 0) return f(a as number, b as number, c as number, d as number, e as number)
  const A = typeof a === 'number' ? null : a
  const B = typeof b === 'number' ? null : b
  const C = typeof c === 'number' ? null : c
  const D = typeof d === 'number' ? null : d
  const E = typeof e === 'number' ? null : e
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    out[i] = f(
      A ? A[i] : (a as number), B ? B[i] : (b as number), C ? C[i] : (c as number),
      D ? D[i] : (d as number), E ? E[i] : (e as number),
    )
  }
  return out
}

/** Any arity: f receives a scratch array of the i-th elements (reused between calls, so f must not keep it). */
export function mapArgs(args: Num[], f: (xs: Float64Array) => number): Num {
  const n = broadcastLength(...args)
  const m = args.length
  const xs = new Float64Array(m)
  if (n < 0) {
    for (let j = 0; j < m; j++) xs[j] = args[j] as number
    return f(xs)
  }
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < m; j++) {
      const a = args[j]
      xs[j] = typeof a === 'number' ? a : a[i]
    }
    out[i] = f(xs)
  }
  return out
}

/** A plain-sentence range error naming the library function (its sheet name) and the argument. */
export function rangeError(fn: string, message: string): RangeError {
  return new RangeError(`${fn}: ${message}`)
}

/**
 * The error `check` throws: a RangeError with the same sentence, which also carries the argument, the requirement and
 * the offending value (SI), so a caller such as the sheet engine can word it in the units a researcher reads.
 */
export class ArgumentRangeError extends RangeError {
  constructor(
    message: string,
    readonly fn: string,
    /** As named in the message: "the gap Eg". */
    readonly argument: string,
    /** What the argument must be: "positive", "between 0 and 1". */
    readonly requirement: string,
    readonly value: number,
    /** The element of an array argument that fails, or undefined for a single number. */
    readonly index?: number,
  ) {
    super(message)
    this.name = 'RangeError'
  }
}

/** Throws unless every element of x satisfies ok; the message names the function, the argument and the bad value. */
export function check(fn: string, name: string, x: Num, ok: (v: number) => boolean, what: string): void {
  if (typeof x === 'number') {
    if (!ok(x)) throw new ArgumentRangeError(`${fn}: ${name} must be ${what} (got ${x})`, fn, name, what, x)
    return
  }
  for (let i = 0; i < x.length; i++) {
    if (!ok(x[i])) throw new ArgumentRangeError(`${fn}: ${name} must be ${what} (element ${i} is ${x[i]})`, fn, name, what, x[i], i)
  }
}

export const positive = (v: number): boolean => v > 0
export const nonNegative = (v: number): boolean => v >= 0
export const fraction = (v: number): boolean => v >= 0 && v <= 1
export const finite = (v: number): boolean => Number.isFinite(v)
