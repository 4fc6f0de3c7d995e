/**
 * Whole-array numbers. Every physics function takes scalars or Float64Arrays and broadcasts element-wise in one pass.
 */
export type Num = number | Float64Array

export function isArray(x: Num): x is Float64Array {
  return typeof x !== 'number'
}

/** Length of the broadcast result of the given arguments, or -1 when all are scalars. Throws on mismatched lengths. */
export function broadcastLength(...args: Num[]): number {
  let n = -1
  for (const a of args) {
    if (typeof a === 'number') continue
    if (n === -1) n = a.length
    else if (a.length !== n) throw new RangeError(`arrays of different lengths (${n} and ${a.length}) cannot be combined element by element`)
  }
  return n
}

/** f applied element-wise to one argument. */
export function map1(a: Num, f: (x: number) => number): Num {
  if (typeof a === 'number') return f(a)
  const out = new Float64Array(a.length)
  for (let i = 0; i < a.length; i++) out[i] = f(a[i])
  return out
}

/** f applied element-wise to two broadcast arguments. */
export function map2(a: Num, b: Num, f: (x: number, y: number) => number): Num {
  const n = broadcastLength(a, b)
  if (n < 0) return f(a as number, b as number)
  const out = new Float64Array(n)
  if (typeof a === 'number') for (let i = 0; i < n; i++) out[i] = f(a, (b as Float64Array)[i])
  else if (typeof b === 'number') for (let i = 0; i < n; i++) out[i] = f(a[i], b)
  else for (let i = 0; i < n; i++) out[i] = f(a[i], b[i])
  return out
}

/** f applied element-wise to any number of broadcast arguments. */
export function mapN(args: Num[], f: (...xs: number[]) => number): Num {
  const n = broadcastLength(...args)
  const m = args.length
  const xs = new Array<number>(m)
  if (n < 0) return f(...(args as number[]))
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < m; j++) {
      const a = args[j]
      xs[j] = typeof a === 'number' ? a : a[i]
    }
    out[i] = f(...xs)
  }
  return out
}

/** Element i of a broadcast argument. */
export function at(a: Num, i: number): number {
  return typeof a === 'number' ? a : a[i]
}

/** A Float64Array view of a Num (a scalar becomes an array of length 1). */
export function toArray(a: Num | number[]): Float64Array {
  if (typeof a === 'number') return Float64Array.of(a)
  return a instanceof Float64Array ? a : Float64Array.from(a)
}
