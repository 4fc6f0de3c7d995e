/**
 * The whole function library: grids and arrays (functions/arrays.ts), elementary functions (math.ts) and the physics
 * groups (physics.ts). Looked up through a Map only; also registered by name on the formula parser's `functions`
 * table (STACK pitfall 6: host functions live there, never in an evaluation scope).
 */
import type { Num } from '../../optics/num'
import { DIMENSIONLESS as D, dimDiv, dimMul } from '../dimensions'
import { DEFAULT_MAX_ELEMENTS } from '../limits'
import { formulaParser } from '../parse'
import * as A from './arrays'
import { MATH } from './math'
import { PHYSICS } from './physics'
import type { Builtin } from './spec'

export type { Builtin } from './spec'

const G = 'grids and arrays'

function entry(
  name: string,
  params: string[],
  args: Builtin['args'],
  result: Builtin['result'],
  doc: string,
  impl: Builtin['impl'],
  extra: Partial<Builtin> = {},
): Builtin {
  return {
    name, group: G, signature: `${name}(${params.join(', ')})`, doc, params, minArgs: params.length,
    maxArgs: params.length, args, result, impl, ...extra,
  }
}

const ARRAYS: Builtin[] = [
  entry('grid', ['from', 'to', 'n'], ['x', 'x', D], 'x', 'n equally spaced values from `from` to `to`, both included',
    ([a, b, n], max) => A.grid(a, b, n, max)),
  entry('loggrid', ['from', 'to', 'n'], ['x', 'x', D], 'x', 'n values from `from` to `to` with equal ratios',
    ([a, b, n], max) => A.loggrid(a, b, n, max)),
  entry('len', ['a'], ['any'], D, 'number of elements (1 for a single number)', ([a]) => A.len(a)),
  entry('sum', ['a'], ['x'], 'x', 'sum of the elements', ([a]) => A.sum(a)),
  entry('mean', ['a'], ['x'], 'x', 'mean of the elements', ([a]) => A.mean(a)),
  entry('min', ['a'], ['x'], 'x', 'smallest element; min(a, b, …) is the element-wise minimum', (xs) => A.min(xs),
    { signature: 'min(a, [b, …])', maxArgs: Infinity, rest: 'x' }),
  entry('max', ['a'], ['x'], 'x', 'largest element; max(a, b, …) is the element-wise maximum', (xs) => A.max(xs),
    { signature: 'max(a, [b, …])', maxArgs: Infinity, rest: 'x' }),
  entry('first', ['a'], ['x'], 'x', 'first element', ([a]) => A.first(a)),
  entry('last', ['a'], ['x'], 'x', 'last element', ([a]) => A.last(a)),
  entry('at', ['a', 'i'], ['x', D], 'x', 'element i, counting from 0 (negative counts from the end)', ([a, i]) => A.at(a, i)),
  entry('where', ['cond', 'a', 'b'], ['any', 'x', 'x'], 'x', 'a where cond is true, b elsewhere, element-wise',
    ([c, a, b]) => A.where(c, a, b)),
  entry('clip', ['x', 'lo', 'hi'], ['x', 'x', 'x'], 'x', 'x limited to the range lo…hi', ([x, lo, hi]) => A.clip(x, lo, hi)),
  entry('interpolate', ['xq', 'x', 'y'], ['x', 'x', 'y'], 'y', 'linear interpolation of the samples (x, y) at xq (no extrapolation: outside the data is an error, or NaN for the points of an array outside it)',
    ([q, x, y]) => A.interpolate(q, x, y)),
  entry('integrate', ['y', 'x'], ['any', 'any'], (d) => (d[0] && d[1] ? dimMul(d[0], d[1]) : null),
    'trapezoid integral of y over x', ([y, x]) => A.integrate(y, x)),
  entry('cumulative', ['y', 'x'], ['any', 'any'], (d) => (d[0] && d[1] ? dimMul(d[0], d[1]) : null),
    'running trapezoid integral of y over x, starting at 0', ([y, x]) => A.cumulative(y, x)),
  entry('slope', ['y', 'x'], ['any', 'any'], (d) => (d[0] && d[1] ? dimDiv(d[0], d[1]) : null),
    'derivative dy/dx at each sample', ([y, x]) => A.slope(y, x)),
  entry('crossing', ['x', 'y', 'level'], ['x', 'y', 'y'], 'x', 'first x where y crosses level (NaN if never)',
    ([x, y, l]) => A.crossing(x, y, l)),
]

/** Every function, in catalog order. */
export const LIBRARY: readonly Builtin[] = [...ARRAYS, ...PHYSICS, ...MATH]

const byName = new Map<string, Builtin>(LIBRARY.map((f) => [f.name, f]))

/** A library function by name, or undefined (own entries only). */
export function builtinFunction(name: string): Builtin | undefined {
  return byName.get(name)
}

let registered = false

/** Registers the library on the shared parser's `functions` table (idempotent). */
export function registerFunctions(): void {
  if (registered) return
  const table = formulaParser().functions as Record<string, (...xs: Num[]) => Num>
  for (const f of LIBRARY) table[f.name] = (...xs: Num[]) => f.impl(xs, DEFAULT_MAX_ELEMENTS)
  registered = true
}
