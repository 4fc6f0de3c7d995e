/**
 * Elementary functions of formulas (group "elementary"): exponentials, logarithms, roots, trigonometry, rounding.
 * Each broadcasts over arrays. Transcendental functions want dimensionless arguments (a warning otherwise);
 * `sqrt` and `cbrt` halve or third the dimension; `abs` and the rounding functions keep it.
 */
import type { Num } from '../../optics/num'
import { DIMENSIONLESS, dimPow } from '../dimensions'
import type { Builtin, ArgDim, ResultDim } from './spec'

function lift(f: (x: number) => number): (args: Num[]) => Num {
  return (args) => {
    const a = args[0]
    if (typeof a === 'number') return f(a)
    const out = new Float64Array(a.length)
    for (let i = 0; i < a.length; i++) out[i] = f(a[i])
    return out
  }
}

function lift2(f: (x: number, y: number) => number): (args: Num[]) => Num {
  return (args) => {
    const [a, b] = args
    if (typeof a === 'number' && typeof b === 'number') return f(a, b)
    const n = typeof a === 'number' ? (b as Float64Array).length : a.length
    if (typeof a !== 'number' && typeof b !== 'number' && a.length !== b.length)
      throw new RangeError(`arrays of different lengths (${a.length} and ${b.length}) cannot be combined element by element`)
    const out = new Float64Array(n)
    for (let i = 0; i < n; i++) out[i] = f(typeof a === 'number' ? a : a[i], typeof b === 'number' ? b : b[i])
    return out
  }
}

function one(name: string, doc: string, f: (x: number) => number, arg: ArgDim, result: ResultDim): Builtin {
  return { name, group: 'elementary', signature: `${name}(x)`, doc, params: ['x'], minArgs: 1, maxArgs: 1, args: [arg], result, impl: lift(f) }
}

const D = DIMENSIONLESS

export const MATH: Builtin[] = [
  one('exp', 'e to the power x (x dimensionless)', Math.exp, D, D),
  one('ln', 'natural logarithm (x dimensionless)', Math.log, D, D),
  one('log', 'natural logarithm, same as ln', Math.log, D, D),
  one('log10', 'base-10 logarithm', Math.log10, D, D),
  one('log2', 'base-2 logarithm', Math.log2, D, D),
  one('expm1', 'exp(x) − 1, accurate for small x', Math.expm1, D, D),
  one('log1p', 'ln(1 + x), accurate for small x', Math.log1p, D, D),
  one('sqrt', 'square root (halves the dimension)', Math.sqrt, 'any', (a) => (a[0] ? dimPow(a[0], 0.5) : null)),
  one('cbrt', 'cube root (a third of the dimension)', Math.cbrt, 'any', (a) => (a[0] ? dimPow(a[0], 1 / 3) : null)),
  one('abs', 'absolute value', Math.abs, 'x', 'x'),
  one('sign', 'sign: −1, 0 or 1', Math.sign, 'any', D),
  one('floor', 'largest whole number ≤ x (of the SI value)', Math.floor, 'x', 'x'),
  one('ceil', 'smallest whole number ≥ x (of the SI value)', Math.ceil, 'x', 'x'),
  one('round', 'nearest whole number (of the SI value)', Math.round, 'x', 'x'),
  one('sin', 'sine of an angle in radians', Math.sin, D, D),
  one('cos', 'cosine of an angle in radians', Math.cos, D, D),
  one('tan', 'tangent of an angle in radians', Math.tan, D, D),
  one('asin', 'inverse sine, radians', Math.asin, D, D),
  one('acos', 'inverse cosine, radians', Math.acos, D, D),
  one('atan', 'inverse tangent, radians', Math.atan, D, D),
  one('sinh', 'hyperbolic sine', Math.sinh, D, D),
  one('cosh', 'hyperbolic cosine', Math.cosh, D, D),
  one('tanh', 'hyperbolic tangent', Math.tanh, D, D),
  {
    name: 'atan2', group: 'elementary', signature: 'atan2(y, x)', doc: 'angle of the point (x, y), radians, −π…π',
    params: ['y', 'x'], minArgs: 2, maxArgs: 2, args: ['x', 'x'], result: D, impl: lift2(Math.atan2),
  },
  {
    name: 'hypot', group: 'elementary', signature: 'hypot(a, b)', doc: '√(a² + b²) without overflow',
    params: ['a', 'b'], minArgs: 2, maxArgs: 2, args: ['x', 'x'], result: 'x', impl: lift2(Math.hypot),
  },
]
