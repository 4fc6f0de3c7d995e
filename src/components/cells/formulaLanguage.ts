/**
 * What the formula editor knows about the language: the words of the sheet (cell names, dataset columns, fit
 * outputs) and of the engine (functions with signatures and one-line docs, units, constants), used for highlighting
 * and autocompletion. The vocabulary is a plain object the page refreshes as cells and the engine's catalog change.
 */
import { Decoration, MatchDecorator, ViewPlugin, type DecorationSet, type EditorView, type ViewUpdate } from '@codemirror/view'
import { insertBracket, type Completion, type CompletionContext, type CompletionResult, type CompletionSource } from '@codemirror/autocomplete'
import type { LibraryCatalog, LibraryFunction } from '@/workers/protocol'
import type { SheetCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'

export interface CellWord {
  kind: string
  unit?: string
  description?: string
  /** Names reachable with `name.` (dataset columns, fit outputs). */
  members: string[]
}

export interface FormulaVocabulary {
  functions: Map<string, LibraryFunction>
  units: Set<string>
  constants: Map<string, string>
  cells: Map<string, CellWord>
}

export const KEYWORDS = new Set(['and', 'or', 'not', 'in'])

/** Fit outputs by method, used before the fit has a result. */
const FIT_OUTPUTS: Record<string, string[]> = {
  tauc: ['Eg', 'Eg_err', 'B', 'r2', 'n'],
  urbach: ['Eu', 'Eu_err', 'alpha0', 'E0', 'r2', 'n'],
  model: ['chi2'],
}

export function emptyVocabulary(): FormulaVocabulary {
  return { functions: new Map(), units: new Set(), constants: new Map(), cells: new Map() }
}

/** Builds the vocabulary from the engine's catalog and the sheet's cells (and their results, for fit outputs). */
export function buildVocabulary(catalog: LibraryCatalog | null, cells: readonly SheetCell[], results: Record<string, CellResult>): FormulaVocabulary {
  const vocab = emptyVocabulary()
  for (const f of catalog?.functions ?? []) vocab.functions.set(f.name, f)
  for (const u of catalog?.units ?? []) vocab.units.add(u)
  for (const c of catalog?.constants ?? []) vocab.constants.set(c.name, c.doc)
  for (const cell of cells) {
    // figures and notes are not values a formula can read
    if (!cell.name || cell.kind === 'figure' || cell.kind === 'note') continue
    let members: string[] = []
    if (cell.kind === 'spectrum') members = Object.keys(cell.columns ?? {})
    else if (cell.kind === 'fit') {
      const value = results[cell.id]?.value
      members =
        value && typeof value === 'object' && !Array.isArray(value)
          ? Object.entries(value)
              .filter(([, v]) => typeof v === 'number')
              .map(([k]) => k)
          : (FIT_OUTPUTS[cell.method] ?? [])
    }
    vocab.cells.set(cell.name, {
      kind: cell.kind,
      unit: 'unit' in cell && typeof cell.unit === 'string' ? cell.unit : undefined,
      description: 'description' in cell && typeof cell.description === 'string' ? cell.description : undefined,
      members,
    })
  }
  return vocab
}

// --- highlighting ----------------------------------------------------------------------------------------------

const TOKEN = /(\d+\.?\d*(?:[eE][+-]?\d+)?|\.\d+(?:[eE][+-]?\d+)?)|([A-Za-z_][A-Za-z0-9_]*)|("(?:[^"\\]|\\.)*"?|'(?:[^'\\]|\\.)*'?)|([-+*/^%<>=!?:]+)/g

const marks = {
  number: Decoration.mark({ class: 'pn-tok-number' }),
  fn: Decoration.mark({ class: 'pn-tok-fn' }),
  unit: Decoration.mark({ class: 'pn-tok-unit' }),
  constant: Decoration.mark({ class: 'pn-tok-constant' }),
  cell: Decoration.mark({ class: 'pn-tok-cell' }),
  member: Decoration.mark({ class: 'pn-tok-member' }),
  unknown: Decoration.mark({ class: 'pn-tok-unknown' }),
  keyword: Decoration.mark({ class: 'pn-tok-keyword' }),
  string: Decoration.mark({ class: 'pn-tok-string' }),
  operator: Decoration.mark({ class: 'pn-tok-operator' }),
}

/** Classifies one identifier of a formula (a cell name shadows a unit or constant, as in the engine). */
export function classifyWord(word: string, vocab: FormulaVocabulary, before: string, after: string): keyof typeof marks {
  if (before === '.') return 'member'
  if (KEYWORDS.has(word)) return 'keyword'
  if (vocab.cells.has(word)) return 'cell'
  if (/^\s*\(/.test(after) && vocab.functions.has(word)) return 'fn'
  if (vocab.constants.has(word)) return 'constant'
  if (vocab.units.has(word)) return 'unit'
  if (vocab.functions.has(word)) return 'fn'
  return 'unknown'
}

/** A view plugin colouring numbers, functions, units, constants, cell names and operators. */
export function formulaHighlighter(vocab: () => FormulaVocabulary) {
  const decorator = new MatchDecorator({
    regexp: TOKEN,
    decoration: (match) => {
      if (match[1] !== undefined) return marks.number
      if (match[2] !== undefined) {
        const input = match.input
        const before = input[match.index - 1] ?? ''
        const after = input.slice(match.index + match[0].length, match.index + match[0].length + 4)
        return marks[classifyWord(match[2], vocab(), before, after)]
      }
      if (match[3] !== undefined) return marks.string
      return marks.operator
    },
  })
  return ViewPlugin.fromClass(
    class {
      decorations: DecorationSet
      constructor(view: EditorView) {
        this.decorations = decorator.createDeco(view)
      }
      update(update: ViewUpdate) {
        this.decorations = decorator.updateDeco(update, this.decorations)
      }
    },
    { decorations: (v) => v.decorations },
  )
}

// --- completion --------------------------------------------------------------------------------------------------

/**
 * Completing a function writes `name()` with the caret between the brackets (or only the name, with the caret
 * after an opening bracket that is already there), so the formula never ends up with an unclosed call.
 */
export function applyCall(name: string) {
  return (view: EditorView, _completion: Completion, from: number, to: number): void => {
    view.dispatch({ changes: { from, to, insert: name }, selection: { anchor: from + name.length }, userEvent: 'input.complete' })
    const head = view.state.selection.main.head
    if (view.state.sliceDoc(head, head + 1) === '(') {
      view.dispatch({ selection: { anchor: head + 1 } })
      return
    }
    // through the bracket-closing extension, so typing ")" later steps over the one written here
    view.dispatch(insertBracket(view.state, '(') ?? { changes: { from: head, insert: '()' }, selection: { anchor: head + 1 }, userEvent: 'input.complete' })
  }
}

/** Autocompletion of cell names, `cell.member`, functions (with signature and doc), units and constants. */
export function formulaCompletion(vocab: () => FormulaVocabulary, ownName: () => string | undefined): CompletionSource {
  return (context: CompletionContext): CompletionResult | null => {
    const member = context.matchBefore(/[A-Za-z_][A-Za-z0-9_]*\.[A-Za-z0-9_]*$/)
    const v = vocab()
    if (member) {
      const dot = member.text.indexOf('.')
      const owner = v.cells.get(member.text.slice(0, dot))
      if (!owner || owner.members.length === 0) return null
      return {
        from: member.from + dot + 1,
        options: owner.members.map((m) => ({ label: m, type: 'property', detail: owner.kind === 'spectrum' ? 'column' : 'fit output' })),
        validFor: /^[A-Za-z0-9_]*$/,
      }
    }
    const word = context.matchBefore(/[A-Za-z_][A-Za-z0-9_]*$/)
    if (!word && !context.explicit) return null
    const from = word ? word.from : context.pos
    const options: Completion[] = []
    const self = ownName()
    for (const [name, cell] of v.cells) {
      if (name === self) continue
      options.push({
        label: name,
        type: 'variable',
        detail: cell.unit ? `${cell.kind}, ${cell.unit}` : cell.kind,
        info: cell.description,
        boost: 3,
      })
    }
    for (const f of v.functions.values()) {
      options.push({
        label: f.name,
        type: 'function',
        detail: f.signature.startsWith(f.name) ? f.signature.slice(f.name.length) : f.signature,
        info: f.doc ? `${f.doc}${f.group ? ` (${f.group})` : ''}` : f.group,
        apply: applyCall(f.name),
        boost: 1,
      })
    }
    for (const [name, doc] of v.constants) options.push({ label: name, type: 'constant', info: doc })
    for (const u of v.units) if (/^[A-Za-z_][A-Za-z0-9_]*$/.test(u)) options.push({ label: u, type: 'unit', detail: 'unit', boost: -1 })
    return { from, options, validFor: /^[A-Za-z0-9_]*$/ }
  }
}
