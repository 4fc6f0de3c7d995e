/**
 * A syntax tree written back as formula text, so a message can point at the part of a formula it is about
 * (`Eg + d adds …`). Only used while a message is written; long parts are shortened with "…".
 */
import type { Node } from './parse'

const PRECEDENCE: Record<string, number> = {
  or: 1, and: 2, '==': 3, '!=': 3, '<': 3, '>': 3, '<=': 3, '>=': 3, '+': 4, '-': 4, '*': 5, '/': 5, '^': 7,
}
const UNARY = 6
const TERNARY = 0

/** Formula text of a subtree, at most `max` characters: sourceOf(tree of "Eg + 2*d") → "Eg + 2*d". */
export function sourceOf(node: Node, max = 40): string {
  const text = write(node)
  return text.length > max ? `${text.slice(0, max - 1).trimEnd()}…` : text
}

/** A number as it would be typed: 4e9 rather than 4000000000, 2e-5 rather than 0.00002. */
function literal(v: number): string {
  const a = Math.abs(v)
  return a >= 1e6 || (a > 0 && a < 1e-4) ? v.toExponential().replace('e+', 'e') : String(v)
}

function precedence(node: Node): number {
  if (node.t === 'binary') return PRECEDENCE[node.op] ?? 0
  if (node.t === 'unary') return UNARY
  if (node.t === 'cond') return TERNARY
  return 9
}

function wrap(node: Node, min: number): string {
  const text = write(node)
  return precedence(node) < min ? `(${text})` : text
}

function write(node: Node): string {
  switch (node.t) {
    case 'num':
      return literal(node.value)
    case 'name':
      return node.name
    case 'member':
      return `${node.object}.${node.member}`
    case 'call':
      return `${node.fn}(${node.args.map(write).join(', ')})`
    case 'array':
      return `[${node.items.map(write).join(', ')}]`
    case 'unary':
      return node.op === 'not' ? `not ${wrap(node.arg, UNARY)}` : `${node.op}${wrap(node.arg, UNARY)}`
    case 'cond':
      return `${wrap(node.test, 1)} ? ${wrap(node.then, 1)} : ${wrap(node.else, 1)}`
    case 'binary': {
      const p = PRECEDENCE[node.op] ?? 0
      const spaced = p <= 4
      const op = spaced ? ` ${node.op} ` : node.op
      // ^ groups to the right, the others to the left: a - (b - c), (a^b)^c keep their brackets
      const left = wrap(node.left, node.op === '^' ? p + 1 : p)
      const right = wrap(node.right, node.op === '^' ? p : p + 1)
      return `${left}${op}${right}`
    }
  }
}
