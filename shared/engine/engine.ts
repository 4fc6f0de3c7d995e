/**
 * The sheet engine: holds a sheet's prepared cells, their dependency graph and their states; evaluates everything
 * on load and, on an edit, only the cells the edit touches, in dependency order. Every failure becomes the state of
 * the cell it happened in ("errors are values"); nothing thrown inside a cell leaves the engine.
 */
import type { CellResult, EvaluationResult } from '../schema/result'
import type { FitCell, SheetCell, SweepCell } from '../schema/sheet'
import {
  evaluateFormula, evaluateParameter, evaluateSpectrum, formulaValue, prepareCell,
  type CellState, type Env, type PreparedCell, type SweepTable,
} from './cells'
import { blockedMessage, CellError, cycleMessage, messageOf, unknownNamesMessage } from './errors'
import { evaluateFit } from './fits'
import { LIBRARY, builtinFunction } from './functions/registry'
import { Budget, DEFAULT_MAX_ELEMENTS, DEFAULT_MAX_SHEET_NUMBERS, DEFAULT_TIME_BUDGET_MS } from './limits'
import { CONSTANTS } from './names'
import { Graph } from './order'
import { toCellJson, type CellJson } from './results'
import { evaluateStack } from './stacks'
import { evaluateSweep } from './sweeps'
import { FORMULA_UNIT_NAMES } from './units'
import { RecordValue, type Value } from './values'

export const ENGINE_VERSION = '1.0.0'

export interface EngineOptions {
  /** Wall-clock budget for evaluating one cell, ms, checked between operations. Default 3000. */
  timeBudgetMs?: number
  /** Largest array one operation may produce. Default 1,000,000. */
  maxElements?: number
  /** Most numbers the whole sheet may hold in its cells' values and tables. Default 10,000,000. */
  maxSheetNumbers?: number
  /** Progress of long cells (sweeps, model fits), fraction 0–1. */
  onProgress?: (cellId: string, fraction: number) => void
}

const NOT_A_VALUE: ReadonlySet<string> = new Set(['sweep', 'figure', 'note'])

export class SheetEngine {
  private cells: PreparedCell[] = []
  private readonly byId = new Map<string, PreparedCell>()
  private readonly states = new Map<string, CellState>()
  private readonly json = new Map<string, CellJson>()
  private graph = new Graph([])
  private title = ''
  private readonly budget: Budget
  /** Numbers each cell's state holds, and their sum: the sheet-wide memory limit. */
  private readonly sizes = new Map<string, number>()
  private held = 0

  constructor(private readonly options: EngineOptions = {}) {
    this.budget = new Budget(options.timeBudgetMs ?? DEFAULT_TIME_BUDGET_MS, options.maxElements ?? DEFAULT_MAX_ELEMENTS)
  }

  /** Replaces the whole sheet and evaluates every cell. */
  load(cells: readonly SheetCell[], title?: string): EvaluationResult {
    this.title = title ?? ''
    this.cells = cells.map((c) => prepareCell(c))
    this.byId.clear()
    for (const p of this.cells) this.byId.set(p.id, p)
    this.states.clear()
    this.json.clear()
    this.sizes.clear()
    this.held = 0
    this.graph = new Graph(this.cells)
    this.evaluate(this.graph.order)
    return this.results()
  }

  /** Replaces one cell (null removes it; an unknown id appends it); returns the ids recomputed, in order. */
  update(cellId: string, cell: SheetCell | null): string[] {
    const old = this.byId.get(cellId)
    if (!cell) {
      if (!old) return []
      this.cells = this.cells.filter((p) => p.id !== cellId)
      this.byId.delete(cellId)
      this.states.delete(cellId)
      this.json.delete(cellId)
      this.held -= this.sizes.get(cellId) ?? 0
      this.sizes.delete(cellId)
      return this.rewire([])
    }
    const next = prepareCell({ ...cell, id: cellId } as SheetCell)
    if (!old) {
      this.cells.push(next)
      this.byId.set(cellId, next)
      return this.rewire([cellId])
    }
    this.cells[this.cells.indexOf(old)] = next
    this.byId.set(cellId, next)
    if (!sameWiring(old, next)) return this.rewire([cellId])
    const stop = valueOnlyParameterEdit(old, next) ? this.unaffectedBy(next) : undefined
    const ids = this.graph.sorted(this.graph.descendants([cellId], stop))
    this.evaluate(ids)
    return ids
  }

  /** Inserts a cell at a position of the sheet; returns the ids recomputed. */
  insert(cell: SheetCell, index: number): string[] {
    if (!cell || typeof cell !== 'object' || typeof cell.id !== 'string') return []
    if (this.byId.has(cell.id)) return this.update(cell.id, cell)
    const p = prepareCell(cell)
    this.cells.splice(Math.max(0, Math.min(index, this.cells.length)), 0, p)
    this.byId.set(p.id, p)
    return this.rewire([p.id])
  }

  /** Moves a cell to a position (order decides which of two same-named cells holds the name). */
  move(cellId: string, index: number): void {
    const p = this.byId.get(cellId)
    if (!p) return
    this.cells = this.cells.filter((c) => c !== p)
    this.cells.splice(Math.max(0, Math.min(index, this.cells.length)), 0, p)
    // a duplicate-name error quotes the position of the cell holding the name, which a move may change
    this.rewire([...this.graph.duplicateOf.keys()])
  }

  /** The whole result object, JSON-ready. */
  results(): EvaluationResult {
    return { title: this.title, cells: this.cells.map((p, i) => this.resultAt(p, i)), engine: ENGINE_VERSION }
  }

  resultOf(cellId: string): CellResult | undefined {
    const p = this.byId.get(cellId)
    return p ? this.resultAt(p, this.cells.indexOf(p)) : undefined
  }

  private resultAt(p: PreparedCell, index: number): CellResult {
    let j = this.json.get(p.id)
    if (!j) {
      j = toCellJson(p, this.states.get(p.id) ?? { status: 'error', error: 'not evaluated', dim: null, warnings: [] })
      this.json.set(p.id, j)
    }
    return { index, ...j }
  }

  /** Rebuilds the graph after a structural change; re-evaluates cells whose wiring changed, and what follows. */
  private rewire(touched: string[]): string[] {
    const before = this.graph
    this.graph = new Graph(this.cells)
    const changed = new Set(touched)
    for (const p of this.cells) if (before.wiring(p.id) !== this.graph.wiring(p.id)) changed.add(p.id)
    const ids = this.graph.sorted(this.graph.descendants(changed))
    this.evaluate(ids)
    return ids
  }

  /**
   * After a value-only edit of parameter P: sweeps over P, and model fits that free P from an explicit start, do not
   * depend on P's current value, so they (and what only they feed) are left alone — provided they are fine now.
   */
  private unaffectedBy(p: PreparedCell): (id: string) => boolean {
    return (id) => {
      const q = this.byId.get(id)
      if (!q || this.states.get(id)?.status !== 'ok') return false
      if (q.kind === 'sweep') return (q.cell as SweepCell).parameter === p.name
      if (q.kind === 'fit') {
        const c = q.cell as FitCell
        return c.method === 'model' && !!c.parameters?.some((f) => f.name === p.name && f.start !== undefined)
      }
      return false
    }
  }

  private evaluate(ids: readonly string[]): void {
    for (const id of ids) {
      const p = this.byId.get(id)
      if (!p) continue
      let state = this.evaluateOne(p)
      let size = numbersIn(state)
      const before = this.sizes.get(id) ?? 0
      const limit = this.options.maxSheetNumbers ?? DEFAULT_MAX_SHEET_NUMBERS
      if (size > 0 && this.held - before + size > limit) {
        // many large cells together would exhaust the memory of the page, the server or the command line
        const fmt = (n: number): string => n.toLocaleString('en-US')
        state = {
          status: 'error', dim: null, warnings: [],
          error: `with this cell's ${fmt(size)} numbers the sheet would hold ${fmt(this.held - before + size)}; the limit for one sheet is ${fmt(limit)}: use shorter grids or fewer sweep steps`,
        }
        size = 0
      }
      this.held += size - before
      this.sizes.set(id, size)
      this.states.set(id, state)
      this.json.delete(id)
    }
  }

  private evaluateOne(p: PreparedCell): CellState {
    const fail = (error: string, status: 'error' | 'blocked' = 'error'): CellState => ({
      status, error, dim: null, warnings: [...p.staticWarnings],
    })
    if (p.kind === 'note' || p.kind === 'figure') return { status: 'ok', value: undefined, dim: null, warnings: [] }
    const first = this.graph.duplicateOf.get(p.id)
    if (first !== undefined) {
      const holder = this.cells.indexOf(this.byId.get(first)!)
      return fail(`the name ${p.name} is already used by cell ${holder + 1} (counting from the top of the sheet); give this cell another name`)
    }
    if (p.problem) return fail(p.problem)
    const cycle = this.graph.cycle.get(p.id)
    if (cycle) return fail(cycleMessage(cycle))
    const unknown = this.graph.unknown.get(p.id)
    if (unknown) return fail(this.unknownMessage(unknown))
    for (const d of this.graph.deps.get(p.id) ?? []) {
      const dep = this.byId.get(d)!
      if (this.states.get(d)?.status !== 'ok') return fail(blockedMessage(dep.name ?? d), 'blocked')
      if (NOT_A_VALUE.has(dep.kind) && (p.kind === 'formula' || p.kind === 'fit' || p.kind === 'stack'))
        return fail(`the input ${dep.name} is a ${dep.kind} cell, which has no value to compute with; formulas and fits can use parameters, formulas, spectra, fits and stacks`)
    }
    this.budget.start()
    try {
      const s = this.compute(p, this.env(p.id))
      return { ...s, warnings: [...p.staticWarnings, ...s.warnings] }
    } catch (err) {
      return fail(messageOf(err))
    }
  }

  /** Unknown names, with a defined name that differs only in case, and how to call a function named bare. */
  private unknownMessage(unknown: readonly string[]): string {
    // a library function named without its arguments reads as an unknown name: say how to call it
    const hints = unknown.flatMap((n) => {
      const f = builtinFunction(n)
      return f ? [`${f.name} is a function: call it as ${f.signature}`] : []
    })
    if (unknown.includes('π')) hints.push('write π as pi')
    const near = new Map<string, string>()
    for (const n of unknown) {
      const match = caseInsensitiveMatch(n, [...this.graph.byName.keys()]) ?? caseInsensitiveMatch(n, BUILTIN_NAMES)
      if (match) near.set(n, match)
    }
    return unknownNamesMessage(unknown, near, hints)
  }

  private compute(p: PreparedCell, env: Env): CellState {
    switch (p.cell.kind) {
      case 'parameter':
        return evaluateParameter(p.cell)
      case 'formula':
        return evaluateFormula(p, env)
      case 'spectrum':
        return evaluateSpectrum(p.cell)
      case 'fit':
        return evaluateFit(p, env)
      case 'sweep':
        return evaluateSweep(p, env)
      case 'stack':
        return evaluateStack(p, env)
      default:
        return { status: 'ok', dim: null, warnings: [] }
    }
  }

  /**
   * The view of the sheet one cell's evaluation gets. `overrides` replace values during sweeps and model fits; `outer`
   * is the view of an enclosing chain, so a model fit re-run inside a sweep still sees the swept value.
   */
  private env(cellId: string, overrides?: Map<string, Value>, outer?: (id: string) => Value | undefined): Env {
    const base = outer ?? ((id: string) => this.states.get(id)?.value)
    const valueOf = overrides ? (id: string) => (overrides.has(id) ? overrides.get(id) : base(id)) : base
    return {
      budget: this.budget,
      cellNamed: (name) => {
        const id = this.graph.byName.get(name)
        return id === undefined ? undefined : this.byId.get(id)
      },
      valueOf,
      stateOf: (id) => this.states.get(id),
      chain: (from, to) => this.graph.chain(from, to),
      runChain: (chain, values) => this.runChain(cellId, chain, values, valueOf),
      progress: (fraction) => this.options.onProgress?.(cellId, fraction),
    }
  }

  private runChain(
    cellId: string, chain: readonly string[], overrides: Map<string, Value>, outer: (id: string) => Value | undefined,
  ): void {
    const env = this.env(cellId, overrides, outer)
    for (const id of chain) {
      const p = this.byId.get(id)!
      try {
        if (p.kind === 'formula') overrides.set(id, formulaValue(p, env))
        else if (p.kind === 'fit' || p.kind === 'stack') {
          const s = p.kind === 'fit' ? evaluateFit(p, env) : evaluateStack(p, env)
          if (s.value !== undefined) overrides.set(id, s.value)
        }
      } catch (err) {
        // running out of time is the whole cell's problem, not this input's
        if (err instanceof CellError && err.kind === 'time') throw err
        throw new CellError(`${p.name ?? id}: ${messageOf(err)}`, err instanceof CellError ? err.kind : 'value')
      }
    }
  }
}

/** Names of constants, units and functions, for suggestions when a name is unknown. */
const BUILTIN_NAMES: readonly string[] = [...CONSTANTS.keys(), ...FORMULA_UNIT_NAMES, ...LIBRARY.map((f) => f.name)]

/** A defined name equal to `name` but for case; single letters are left alone (a is not a slip for A, the ampere). */
function caseInsensitiveMatch(name: string, candidates: readonly string[]): string | undefined {
  if (name.length < 2) return undefined
  const lower = name.toLowerCase()
  return candidates.find((c) => c !== name && c.toLowerCase() === lower)
}

/** Numbers a cell's state holds: its value's elements, a record's fields, a sweep's table. */
function numbersIn(s: CellState): number {
  const count = (v: Value | undefined): number => {
    if (v === undefined) return 0
    if (typeof v === 'number') return 1
    if (v instanceof RecordValue) {
      let n = 0
      for (const f of v.fields.values()) n += typeof f.value === 'number' ? 1 : f.value.length
      return n
    }
    return v.length
  }
  let n = count(s.value)
  const shown = s.shown as SweepTable | undefined
  if (shown && Array.isArray(shown.parameter) && shown.outputs) {
    n += shown.parameter.length
    for (const rows of Object.values(shown.outputs)) for (const r of rows) n += typeof r === 'number' ? 1 : r.length
  }
  return n
}

function sameWiring(a: PreparedCell, b: PreparedCell): boolean {
  return a.kind === b.kind && a.name === b.name && a.cellsOnly === b.cellsOnly && a.reads.length === b.reads.length &&
    a.reads.every((r, i) => r === b.reads[i])
}

function valueOnlyParameterEdit(a: PreparedCell, b: PreparedCell): boolean {
  return a.cell.kind === 'parameter' && b.cell.kind === 'parameter' && a.cell.unit === b.cell.unit && !a.problem && !b.problem
}
