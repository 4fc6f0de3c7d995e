/**
 * Compiling a formula's syntax tree into a tree of closures that evaluate whole arrays per operation, and the
 * dimension pass that checks how dimensions flow through it. A formula is parsed and compiled once; evaluating it
 * again (an edit upstream, each step of a sweep, each iteration of a fit) only runs the closures.
 *
 * Free names are positional: `names[i]` is bound by the caller to `inputs[i]` (a cell's value, or a constant or unit),
 * so a compiled formula does not depend on the sheet it sits in.
 */
import type { Num } from '../optics/num'
import { ArgumentRangeError } from '../optics/broadcast'
import { dimNoun, dimPhrase, energyAndLength, formatQuantity } from './describe'
import { DIMENSIONLESS, dimDiv, dimEquals, dimMul, dimPow, isDimensionless, type Dim } from './dimensions'
import { CellError } from './errors'
import { LIBRARY, builtinFunction, registerFunctions, type Builtin } from './functions/registry'
import { arityProblem, flowDims } from './functions/spec'
import type { Budget } from './limits'
import { binaryOp, select, unaryOp } from './ops'
import { parseFormula, type Node } from './parse'
import { sourceOf } from './source'
import { RecordValue, asNum, type Value } from './values'

type Run = (inputs: readonly Value[], budget: Budget) => Num

export interface CompiledFormula {
  source: string
  tree: Node
  /** Free names (cells, constants, units) in order of first use; `inputs[i]` binds `names[i]`. */
  names: string[]
  run: Run
}

const cache = new Map<string, CompiledFormula>()
const CACHE_SIZE = 1000

/**
 * Parses and compiles one formula. Throws CellError for syntax, refused names, unknown functions or arity.
 * Compiled formulas do not depend on their sheet, so they are kept by source text (the last 1,000) and a reloaded
 * sheet, or the same formula in another cell, is not parsed again.
 */
export function compileFormula(source: string): CompiledFormula {
  const hit = cache.get(source)
  if (hit) {
    // refresh its place in the insertion order, which is the eviction order
    cache.delete(source)
    cache.set(source, hit)
    return hit
  }
  const compiled = compileUncached(source)
  cache.set(source, compiled)
  if (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value as string)
  return compiled
}

function compileUncached(source: string): CompiledFormula {
  registerFunctions()
  const tree = parseFormula(source)
  const names: string[] = []
  const slot = (name: string): number => {
    let i = names.indexOf(name)
    if (i < 0) i = names.push(name) - 1
    return i
  }
  const run = build(tree, slot)
  return { source, tree, names, run }
}

function checked(budget: Budget, r: Num): Num {
  budget.tick()
  if (typeof r !== 'number' && r.length > budget.maxElements) budget.elements(r.length, 'the result')
  return r
}

function build(node: Node, slot: (name: string) => number): Run {
  switch (node.t) {
    case 'num': {
      const v = node.value
      return () => v
    }
    case 'name': {
      const i = slot(node.name)
      const name = node.name
      return (inp) => asNum(inp[i], name)
    }
    case 'member': {
      const i = slot(node.object)
      const { object, member } = node
      return (inp) => {
        const r = inp[i]
        if (!(r instanceof RecordValue))
          throw new CellError(`${object}.${member}: ${object} is a number or array, not a spectrum or fit with members`, 'name')
        return r.get(member).value
      }
    }
    case 'unary': {
      const a = build(node.arg, slot)
      const op = node.op
      return (inp, b) => checked(b, unaryOp(op, a(inp, b)))
    }
    case 'binary': {
      const l = build(node.left, slot)
      const r = build(node.right, slot)
      const op = node.op
      return (inp, b) => checked(b, binaryOp(op, l(inp, b), r(inp, b)))
    }
    case 'cond': {
      const t = build(node.test, slot)
      const y = build(node.then, slot)
      const n = build(node.else, slot)
      return (inp, b) => {
        const test = t(inp, b)
        if (typeof test === 'number') return test !== 0 && !Number.isNaN(test) ? y(inp, b) : n(inp, b)
        return checked(b, select(test, y(inp, b), n(inp, b)))
      }
    }
    case 'array': {
      const items = node.items.map((x) => build(x, slot))
      return (inp, b) => {
        const out = new Float64Array(items.length)
        items.forEach((f, k) => {
          const v = f(inp, b)
          if (typeof v !== 'number') throw new CellError('array literals [a, b, …] hold single numbers only', 'value')
          out[k] = v
        })
        return out
      }
    }
    case 'call': {
      const fn = builtinFunction(node.fn)
      if (!fn) throw new CellError(unknownFunctionMessage(node.fn), 'name')
      const problem = arityProblem(fn, node.args.length)
      if (problem) throw new CellError(problem, 'syntax')
      const args = node.args.map((x) => build(x, slot))
      return (inp, b) => {
        const xs = args.map((f) => f(inp, b))
        return checked(b, callBuiltin(fn, xs, b))
      }
    }
  }
}

/**
 * "unknown function: photonEnergy; did you mean photon_energy?" — a library name that differs only in case or
 * underscores is suggested; otherwise the message says where the names are.
 */
function unknownFunctionMessage(name: string): string {
  const key = (s: string): string => s.replace(/_/g, '').toLowerCase()
  const near = LIBRARY.find((f) => key(f.name) === key(name))
  return near
    ? `unknown function: ${name}; did you mean ${near.name}? Names are case-sensitive`
    : `unknown function: ${name}; check the spelling against the function library (the formula editor completes its names)`
}

function callBuiltin(fn: Builtin, xs: Num[], budget: Budget): Num {
  try {
    return fn.impl(xs, budget.maxElements)
  } catch (err) {
    if (err instanceof CellError) throw err
    if (err instanceof ArgumentRangeError) throw new CellError(argumentMessage(fn, xs, err), 'value')
    const message = err instanceof Error ? err.message : String(err)
    throw new CellError(message.startsWith(fn.name) ? message : `${fn.name}: ${message}`, 'value')
  }
}

/**
 * An argument out of its range, with the value in the usual unit of that argument's dimension: "alpha_edge: the gap
 * Eg must be positive, but it is -1 eV". The argument is found by its name (the last word of the physics library's
 * wording, "the gap Eg" → Eg) or else by the failing value; without a fixed dimension the number is given bare.
 */
function argumentMessage(fn: Builtin, xs: readonly Num[], err: ArgumentRangeError): string {
  const key = (s: string): string => s.replace(/_/g, '').toLowerCase()
  const word = key(err.argument.split(' ').pop() ?? '')
  let k = fn.params.findIndex((p) => key(p) === word)
  if (k < 0) {
    const same = (v: number): boolean => v === err.value || (Number.isNaN(v) && Number.isNaN(err.value))
    k = xs.findIndex((x) => (typeof x === 'number' ? err.index === undefined && same(x) : err.index !== undefined && same(x[err.index])))
  }
  const want = k >= 0 && k < fn.args.length ? fn.args[k] : 'any'
  const value = formatQuantity(err.value, typeof want === 'string' ? null : want)
  const where = err.index === undefined ? `it is ${value}` : `element ${err.index} (counting from 0) is ${value}`
  return `${fn.name}: ${err.argument} must be ${err.requirement}, but ${where}`
}

/** What the dimension pass knows about one bound name. */
export type InputDim = { dim: Dim | null } | { record: RecordValue }

export interface DimResult {
  dim: Dim | null
  warnings: string[]
}

/**
 * Infers the dimension of a formula's value from its inputs' dimensions, collecting a warning for every mismatch
 * (adding an energy to a length, an exponential of a length, a function argument of the wrong kind). Unknown
 * dimensions (null) are compatible with everything; a literal 0 is compatible with any dimension.
 */
export function inferDims(f: CompiledFormula, inputs: readonly InputDim[]): DimResult {
  const warnings: string[] = []
  const byName = new Map<string, InputDim>()
  f.names.forEach((n, i) => byName.set(n, inputs[i]))
  const dim = walk(f.tree, byName, warnings)
  return { dim, warnings: [...new Set(warnings)] }
}

function walk(node: Node, inputs: ReadonlyMap<string, InputDim>, w: string[]): Dim | null {
  switch (node.t) {
    case 'num':
      return node.value === 0 ? null : DIMENSIONLESS
    case 'name': {
      const i = inputs.get(node.name)
      return i && 'dim' in i ? i.dim : null
    }
    case 'member': {
      const i = inputs.get(node.object)
      if (!i || !('record' in i)) return null
      return i.record.fields.get(node.member)?.dim ?? null
    }
    case 'unary': {
      const a = walk(node.arg, inputs, w)
      return node.op === 'not' ? DIMENSIONLESS : a
    }
    case 'binary': {
      const a = walk(node.left, inputs, w)
      const b = walk(node.right, inputs, w)
      switch (node.op) {
        case '*':
          return a && b ? dimMul(a, b) : null
        case '/':
          return a && b ? dimDiv(a, b) : null
        case '^':
          return powDim(node, a, b, w)
        case '+':
        case '-':
          if (a && b && !dimEquals(a, b)) {
            w.push(sumMismatch(node, a, b))
            return null
          }
          return a ?? b
        case 'and':
        case 'or':
          return DIMENSIONLESS
        default:
          if (a && b && !dimEquals(a, b))
            w.push(`"${sourceOf(node)}" compares ${dimNoun(a)} with ${dimNoun(b)}: both sides of "${node.op}" need the same dimension${conversionHint(a, b)}`)
          return DIMENSIONLESS
      }
    }
    case 'cond': {
      walk(node.test, inputs, w)
      const a = walk(node.then, inputs, w)
      const b = walk(node.else, inputs, w)
      if (a && b && !dimEquals(a, b))
        w.push(`the two branches of "${sourceOf(node)}" differ: one is ${dimNoun(a)}, the other ${dimNoun(b)}; both need the same dimension`)
      return a ?? b
    }
    case 'array': {
      let d: Dim | null = null
      for (const item of node.items) {
        const x = walk(item, inputs, w)
        if (x && d && !dimEquals(x, d))
          w.push(`the array "${sourceOf(node)}" mixes ${dimNoun(d)} and ${dimNoun(x)}; all its elements need the same dimension`)
        d = d ?? x
      }
      return d
    }
    case 'call': {
      const fn = builtinFunction(node.fn)
      const args = node.args.map((a) => walk(a, inputs, w))
      if (!fn) return null
      const out = flowDims(fn, args)
      w.push(...out.warnings)
      return out.dim
    }
  }
}

function powDim(node: Node & { t: 'binary' }, a: Dim | null, b: Dim | null, w: string[]): Dim | null {
  if (b && !isDimensionless(b)) w.push(`the exponent in "${sourceOf(node)}" should be a dimensionless number, not ${dimPhrase(b)}`)
  if (!a) return null
  if (isDimensionless(a)) return DIMENSIONLESS
  const p = constantValue(node.right)
  if (p === undefined) {
    w.push(`"${sourceOf(node)}" raises ${dimPhrase(a)} to a power that is not a constant number, so the result's dimension is unknown; write the power as a number, such as ^2 or ^(1/2)`)
    return null
  }
  return dimPow(a, p)
}

/**
 * `a + b` or `a - b` of two different dimensions: "\"d + Eg\" adds energy (eV) to length (nm): both sides of \"+\"
 * need the same dimension". Written only when they differ.
 */
function sumMismatch(node: Node & { t: 'binary' }, a: Dim, b: Dim): string {
  const verb = node.op === '+' ? `adds ${dimNoun(b)} to ${dimNoun(a)}` : `subtracts ${dimNoun(b)} from ${dimNoun(a)}`
  return `"${sourceOf(node)}" ${verb}: both sides of "${node.op}" need the same dimension${conversionHint(a, b)}`
}

/** The usual slip between energies and wavelengths has a library conversion; say which. */
function conversionHint(a: Dim, b: Dim): string {
  return energyAndLength(a, b) ? ' (photon_energy(lambda) and photon_wavelength(E) convert between the two)' : ''
}

/** The value of a subtree made of numbers and arithmetic only (such as `-1/2`), else undefined. */
function constantValue(node: Node): number | undefined {
  if (node.t === 'num') return node.value
  if (node.t === 'unary' && node.op !== 'not') {
    const v = constantValue(node.arg)
    return v === undefined ? undefined : node.op === '-' ? -v : v
  }
  if (node.t === 'binary' && ['+', '-', '*', '/', '^'].includes(node.op)) {
    const l = constantValue(node.left)
    const r = constantValue(node.right)
    if (l === undefined || r === undefined) return undefined
    return binaryOp(node.op, l, r) as number
  }
  return undefined
}
