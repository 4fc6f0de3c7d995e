/**
 * Operators of the formula language on whole arrays: one tight loop per operation over Float64Arrays, scalars
 * broadcast. Comparisons and logic give 1 (true) or 0 (false), element-wise.
 */
import type { Num } from '../optics/num'
import type { BinaryOp, UnaryOp } from './parse'
import { CellError } from './errors'

function lengthOf(op: string, a: Num, b: Num): number {
  if (typeof a === 'number') return typeof b === 'number' ? -1 : b.length
  if (typeof b !== 'number' && b.length !== a.length)
    throw new CellError(
      `"${op}" combines arrays of different lengths (${a.length} and ${b.length}) element by element; use arrays of one length, such as arrays made on the same grid`,
      'value',
    )
  return a.length
}

type Kernel = (x: number, y: number) => number

/** Generic broadcast loop for the less frequent operators. */
function zip(op: string, a: Num, b: Num, f: Kernel): Num {
  const n = lengthOf(op, a, b)
  if (n < 0) return f(a as number, b as number)
  const out = new Float64Array(n)
  if (typeof a === 'number') {
    const y = b as Float64Array
    for (let i = 0; i < n; i++) out[i] = f(a, y[i])
  } else if (typeof b === 'number') for (let i = 0; i < n; i++) out[i] = f(a[i], b)
  else for (let i = 0; i < n; i++) out[i] = f(a[i], b[i])
  return out
}

function add(a: Num, b: Num): Num {
  const n = lengthOf('+', a, b)
  if (n < 0) return (a as number) + (b as number)
  const out = new Float64Array(n)
  if (typeof a === 'number') {
    const y = b as Float64Array
    for (let i = 0; i < n; i++) out[i] = a + y[i]
  } else if (typeof b === 'number') for (let i = 0; i < n; i++) out[i] = a[i] + b
  else for (let i = 0; i < n; i++) out[i] = a[i] + b[i]
  return out
}

function sub(a: Num, b: Num): Num {
  const n = lengthOf('-', a, b)
  if (n < 0) return (a as number) - (b as number)
  const out = new Float64Array(n)
  if (typeof a === 'number') {
    const y = b as Float64Array
    for (let i = 0; i < n; i++) out[i] = a - y[i]
  } else if (typeof b === 'number') for (let i = 0; i < n; i++) out[i] = a[i] - b
  else for (let i = 0; i < n; i++) out[i] = a[i] - b[i]
  return out
}

function mul(a: Num, b: Num): Num {
  const n = lengthOf('*', a, b)
  if (n < 0) return (a as number) * (b as number)
  const out = new Float64Array(n)
  if (typeof a === 'number') {
    const y = b as Float64Array
    for (let i = 0; i < n; i++) out[i] = a * y[i]
  } else if (typeof b === 'number') for (let i = 0; i < n; i++) out[i] = a[i] * b
  else for (let i = 0; i < n; i++) out[i] = a[i] * b[i]
  return out
}

function div(a: Num, b: Num): Num {
  const n = lengthOf('/', a, b)
  if (n < 0) return (a as number) / (b as number)
  const out = new Float64Array(n)
  if (typeof a === 'number') {
    const y = b as Float64Array
    for (let i = 0; i < n; i++) out[i] = a / y[i]
  } else if (typeof b === 'number') for (let i = 0; i < n; i++) out[i] = a[i] / b
  else for (let i = 0; i < n; i++) out[i] = a[i] / b[i]
  return out
}

function pow(a: Num, b: Num): Num {
  if (typeof b === 'number' && typeof a !== 'number') {
    const out = new Float64Array(a.length)
    if (b === 2) for (let i = 0; i < a.length; i++) out[i] = a[i] * a[i]
    else if (b === 0.5) for (let i = 0; i < a.length; i++) out[i] = Math.sqrt(a[i])
    else for (let i = 0; i < a.length; i++) out[i] = a[i] ** b
    return out
  }
  return zip('^', a, b, (x, y) => x ** y)
}

const truth = (x: number): boolean => x !== 0 && !Number.isNaN(x)

const KERNELS: Record<Exclude<BinaryOp, '+' | '-' | '*' | '/' | '^'>, Kernel> = {
  '==': (x, y) => (x === y ? 1 : 0),
  '!=': (x, y) => (x !== y ? 1 : 0),
  '<': (x, y) => (x < y ? 1 : 0),
  '>': (x, y) => (x > y ? 1 : 0),
  '<=': (x, y) => (x <= y ? 1 : 0),
  '>=': (x, y) => (x >= y ? 1 : 0),
  and: (x, y) => (truth(x) && truth(y) ? 1 : 0),
  or: (x, y) => (truth(x) || truth(y) ? 1 : 0),
}

/** `a op b`, element-wise. */
export function binaryOp(op: BinaryOp, a: Num, b: Num): Num {
  switch (op) {
    case '+':
      return add(a, b)
    case '-':
      return sub(a, b)
    case '*':
      return mul(a, b)
    case '/':
      return div(a, b)
    case '^':
      return pow(a, b)
    default:
      return zip(op, a, b, KERNELS[op])
  }
}

/** `op a`, element-wise. */
export function unaryOp(op: UnaryOp, a: Num): Num {
  if (op === '+') return a
  if (op === '-') {
    if (typeof a === 'number') return -a
    const out = new Float64Array(a.length)
    for (let i = 0; i < a.length; i++) out[i] = -a[i]
    return out
  }
  if (typeof a === 'number') return truth(a) ? 0 : 1
  const out = new Float64Array(a.length)
  for (let i = 0; i < a.length; i++) out[i] = truth(a[i]) ? 0 : 1
  return out
}

/** `test ? then : otherwise` with an array test: element-wise choice, like where(test, then, otherwise). */
export function select(test: Num, then: Num, otherwise: Num): Num {
  if (typeof test === 'number') return truth(test) ? then : otherwise
  const n = test.length
  for (const x of [then, otherwise])
    if (typeof x !== 'number' && x.length !== n)
      throw new CellError(`a condition over ${n} elements cannot choose from an array of ${x.length}`, 'value')
  const out = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    const src = truth(test[i]) ? then : otherwise
    out[i] = typeof src === 'number' ? src : src[i]
  }
  return out
}

export { truth }
