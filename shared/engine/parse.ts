/**
 * Parsing formulas: expr-eval-fork's parser (security-fixed fork of expr-eval) reads the text into its postfix
 * instruction list, which is turned here into a small syntax tree that the engine compiles itself. expr-eval's own
 * evaluator is never used, so no formula value ever reaches a JavaScript function, prototype or global.
 *
 * The parser's operator tables are replaced by prototype-free ones holding only the operators formulas may use; its
 * built-in constants (including `E`) are removed so `E` is free for photon energies. Host functions are registered on
 * `parser.functions` (see functions/registry.ts), never in an evaluation scope.
 */
import { Parser } from 'expr-eval-fork'
import { CellError, EMPTY_FORMULA } from './errors'
import { MAX_FORMULA_LENGTH, MAX_NODES } from './limits'
import { formulaUnitTable } from './units'

export type BinaryOp = '+' | '-' | '*' | '/' | '^' | '==' | '!=' | '<' | '>' | '<=' | '>=' | 'and' | 'or'
export type UnaryOp = '-' | '+' | 'not'

export type Node =
  | { t: 'num'; value: number }
  | { t: 'name'; name: string }
  | { t: 'member'; object: string; member: string }
  | { t: 'call'; fn: string; args: Node[] }
  | { t: 'unary'; op: UnaryOp; arg: Node }
  | { t: 'binary'; op: BinaryOp; left: Node; right: Node }
  | { t: 'cond'; test: Node; then: Node; else: Node }
  | { t: 'array'; items: Node[] }

const BINARY: ReadonlySet<string> = new Set(['+', '-', '*', '/', '^', '==', '!=', '<', '>', '<=', '>=', 'and', 'or'])
const UNARY: ReadonlySet<string> = new Set(['-', '+', 'not'])

/**
 * Names that belong to JavaScript's object model. They are refused outright, as names and as members, with a
 * security error, even though the engine's Map-based lookups could never resolve them anyway.
 */
const RESERVED: ReadonlySet<string> = new Set([
  'constructor', 'prototype', 'this', 'toString', 'valueOf', 'hasOwnProperty', 'isPrototypeOf',
  'propertyIsEnumerable', 'toLocaleString', 'caller', 'callee', 'arguments',
])

export function isReserved(name: string): boolean {
  return name.startsWith('__') || RESERVED.has(name)
}

function table(keys: Iterable<string>): Record<string, () => never> {
  const t = Object.create(null) as Record<string, () => never>
  const refuse = (): never => {
    throw new CellError('expr-eval evaluation is disabled in Penumbra', 'security')
  }
  for (const k of keys) t[k] = refuse
  return t
}

let shared: Parser | undefined

/** The one configured parser. `functions` is filled by the registry with the host functions' names. */
export function formulaParser(): Parser {
  if (shared) return shared
  const p = new Parser({
    allowMemberAccess: true,
    operators: {
      assignment: false, fndef: false, concatenate: false, factorial: false, remainder: false, in: false,
      random: false, length: false,
    },
  })
  // the typings declare only unaryOps, functions and consts; the operator tables exist on every instance
  const ops = p as unknown as Record<'unaryOps' | 'binaryOps' | 'ternaryOps', unknown>
  ops.unaryOps = table(UNARY)
  ops.binaryOps = table(BINARY)
  ops.ternaryOps = table(['?'])
  p.consts = Object.create(null)
  p.functions = Object.create(null)
  shared = p
  return p
}

interface Instr {
  type: string
  value: unknown
}

/**
 * Parses one formula into a syntax tree, or throws a CellError saying what is wrong (syntax, a refused name, an
 * operator formulas do not have, too long, too deeply nested).
 */
export function parseFormula(source: string): Node {
  if (source.length > MAX_FORMULA_LENGTH)
    throw new CellError(`the formula is ${source.length.toLocaleString('en-US')} characters long; the limit is ${MAX_FORMULA_LENGTH.toLocaleString('en-US')}: split it into several formula cells`, 'limit')
  if (source.trim() === '') throw new CellError(EMPTY_FORMULA, 'syntax')
  const juxtaposed = numberBesideName(source)
  if (juxtaposed) throw new CellError(juxtaposed, 'syntax')
  let tokens: Instr[]
  try {
    tokens = (formulaParser().parse(source) as unknown as { tokens: Instr[] }).tokens
  } catch (err) {
    if (err instanceof RangeError) throw new CellError('the formula is nested too deeply: split it into several formula cells', 'limit')
    const word = /Expected EOF/.test((err as Error).message) ? JS_WORDS.exec(source) : null
    if (word) throw new CellError(`"${word[1]}" is not part of the formula language (formulas are one expression of numbers, names and library functions)`, 'syntax')
    throw new CellError(syntaxMessage((err as Error).message), 'syntax')
  }
  const counter = { n: 0 }
  return toTree(tokens, counter)
}

/** A number written straight before a name, `532 nm` or `532nm` (not `x2 nm`, not `1e-3`, not `2 and x`). */
// (the number sits in a lookahead, which never gives characters back: `1e4` is not read as 1 then e4)
const NUMBER_THEN_NAME = /(?<![\w.])(?=(\d+\.?\d*(?:[eE][+-]?\d+)?|\.\d+(?:[eE][+-]?\d+)?))\1[ \t]*([A-Za-z_µ]\w*)/g
const WORD_OPERATORS: ReadonlySet<string> = new Set(['and', 'or', 'not', 'in'])

/**
 * "write 532*nm …" for a number next to a unit or a name, which the parser would otherwise read as the end of the
 * formula or, inside a call, as a missing comma (an argument-count error); undefined when there is none.
 * Text in quotes is left to the parser's own message.
 */
export function numberBesideName(source: string): string | undefined {
  if (/["']/.test(source)) return undefined
  for (const m of source.matchAll(NUMBER_THEN_NAME)) {
    const [whole, number, name] = m
    if (WORD_OPERATORS.has(name)) continue
    const unit = formulaUnitTable().has(name)
    return `write ${number}*${name}, not "${whole.trim()}": ${unit ? 'a unit is a number that multiplies its value, with' : 'a number and a name need'} a * between them`
  }
  return undefined
}

/** JavaScript and expr-eval words a formula might try; after them the parser only says it expected the end. */
const JS_WORDS = /\b(in|instanceof|typeof|new|void|delete|function|return|let|var|const|await|yield)\b\s*[^\s(,)]/

/** The parser's token types in words, for its "Expected TNAME" messages. */
const TOKEN_WORDS: Record<string, string> = {
  NAME: 'a name', NUMBER: 'a number', STRING: 'a value', PAREN: 'a parenthesis', COMMA: 'a comma', OP: 'an operator',
  BRACKET: 'a bracket', SEMICOLON: 'the end of the formula',
}

const CHARACTER_HINTS: Record<string, string> = {
  '=': 'assignments are not allowed: each cell defines one name (compare with ==)',
  '%': '"%" is not an operator in formulas; write percent as /100 or *percent',
  '|': '"||" is not an operator in formulas; use or',
  '!': 'factorials are not available; write "not x" for negation and "!=" for inequality',
}

function syntaxMessage(raw: string): string {
  const c = /Unknown character "(.)"/.exec(raw)
  if (c && Object.hasOwn(CHARACTER_HINTS, c[1])) return CHARACTER_HINTS[c[1]]
  const m = /^parse error \[(\d+):(\d+)\]: (.*)$/.exec(raw)
  if (m) {
    const what = m[3]
      .replace('Expected EOF', 'expected the end of the formula')
      .replace('Expected ', 'expected ')
      .replace(/\bT(NAME|NUMBER|STRING|PAREN|COMMA|OP|BRACKET|SEMICOLON)\b/, (_all, t: string) => TOKEN_WORDS[t] ?? t.toLowerCase())
    return `syntax error at column ${m[2]}: ${what}`
  }
  if (/unexpected TEOF/.test(raw)) return 'syntax error: the formula ends too early'
  const u = /unexpected (T\w+): (.*)/.exec(raw)
  if (u) return `syntax error: unexpected "${u[2]}"`
  return `syntax error: ${raw}`
}

function toTree(tokens: Instr[], counter: { n: number }): Node {
  const stack: (Node | Instr[])[] = []
  const pop = (): Node => {
    const v = stack.pop()
    if (v === undefined) throw new CellError('syntax error: an operator is missing an operand', 'syntax')
    if (Array.isArray(v)) return toTree(v, counter)
    return v
  }
  const push = (n: Node): void => {
    if (++counter.n > MAX_NODES) throw new CellError(`the formula has more than ${MAX_NODES.toLocaleString('en-US')} terms: split it into several formula cells`, 'limit')
    stack.push(n)
  }
  for (const item of tokens) {
    switch (item.type) {
      case 'INUMBER':
        if (typeof item.value !== 'number')
          throw new CellError('text in quotes is not a value in formulas', 'syntax')
        push({ t: 'num', value: item.value })
        break
      case 'IVAR': {
        const name = String(item.value)
        if (isReserved(name)) throw new CellError(`"${name}" is not allowed in formulas`, 'security')
        push({ t: 'name', name })
        break
      }
      case 'IMEMBER': {
        const member = String(item.value)
        const object = pop()
        if (isReserved(member)) throw new CellError(`".${member}" is not allowed in formulas`, 'security')
        if (object.t !== 'name')
          throw new CellError(
            `".${member}": member access only reaches a spectrum's columns or a fit's results, written name.member`,
            'security',
          )
        push({ t: 'member', object: object.name, member })
        break
      }
      case 'IFUNCALL': {
        const n = item.value as number
        const args: Node[] = []
        for (let i = 0; i < n; i++) args.unshift(pop())
        const callee = pop()
        if (callee.t !== 'name')
          throw new CellError('only library functions can be called, by name: f(x)', 'security')
        push({ t: 'call', fn: callee.name, args })
        break
      }
      case 'IOP1': {
        const op = String(item.value)
        if (!UNARY.has(op)) throw new CellError(`"${op}" is not an operator in formulas`, 'syntax')
        push({ t: 'unary', op: op as UnaryOp, arg: pop() })
        break
      }
      case 'IOP2': {
        const op = String(item.value)
        if (op === '=') throw new CellError('assignments are not allowed: each cell defines one name', 'syntax')
        if (op === '%') throw new CellError('"%" is not an operator in formulas; write percent as /100 or *percent', 'syntax')
        if (op === '||') throw new CellError('"||" is not an operator in formulas; use or', 'syntax')
        if (op === '[') throw new CellError('indexing with [ ] is not supported; use at(a, i)', 'syntax')
        if (!BINARY.has(op)) throw new CellError(`"${op}" is not an operator in formulas`, 'syntax')
        const right = pop()
        const left = pop()
        push({ t: 'binary', op: op as BinaryOp, left, right })
        break
      }
      case 'IOP3': {
        const otherwise = pop()
        const then = pop()
        const test = pop()
        push({ t: 'cond', test, then, else: otherwise })
        break
      }
      case 'IEXPR':
        // operands of and / or / ?: arrive as nested instruction lists; a nested list holding a statement
        // separator means the formula used ";"
        if ((item.value as Instr[]).some((x) => x.type === 'IENDSTATEMENT'))
          throw new CellError('one expression per formula: ";" separates statements, which formulas do not have', 'syntax')
        stack.push(item.value as Instr[])
        break
      case 'IARRAY': {
        const n = item.value as number
        const items: Node[] = []
        for (let i = 0; i < n; i++) items.unshift(pop())
        push({ t: 'array', items })
        break
      }
      case 'IENDSTATEMENT':
        throw new CellError('one expression per formula: ";" separates statements, which formulas do not have', 'syntax')
      case 'IVARNAME':
      case 'IFUNDEF':
        throw new CellError('defining names or functions inside a formula is not allowed', 'syntax')
      default:
        throw new CellError(`syntax error: unsupported construct ${item.type}`, 'syntax')
    }
  }
  if (stack.length !== 1) throw new CellError('one expression per formula', 'syntax')
  return pop()
}

/** Free names of a tree (cells, constants, units) and the cell names used with members (`filmB` of `filmB.T`). */
export function freeNames(node: Node, out: Set<string> = new Set()): Set<string> {
  switch (node.t) {
    case 'name':
      out.add(node.name)
      break
    case 'member':
      out.add(node.object)
      break
    case 'call':
      for (const a of node.args) freeNames(a, out)
      break
    case 'unary':
      freeNames(node.arg, out)
      break
    case 'binary':
      freeNames(node.left, out)
      freeNames(node.right, out)
      break
    case 'cond':
      freeNames(node.test, out)
      freeNames(node.then, out)
      freeNames(node.else, out)
      break
    case 'array':
      for (const a of node.items) freeNames(a, out)
      break
    case 'num':
      break
  }
  return out
}

/** Names called as functions in a tree. */
export function calledNames(node: Node, out: Set<string> = new Set()): Set<string> {
  if (node.t === 'call') out.add(node.fn)
  const kids: Node[] =
    node.t === 'call' ? node.args : node.t === 'unary' ? [node.arg] : node.t === 'binary' ? [node.left, node.right]
      : node.t === 'cond' ? [node.test, node.then, node.else] : node.t === 'array' ? node.items : []
  for (const k of kids) calledNames(k, out)
  return out
}
