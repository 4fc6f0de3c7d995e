/**
 * The sheet engine: formula language with units, dependency graph, evaluation, fits and sweeps. Pure TypeScript, run
 * identically by the browser worker, the server and the command-line evaluator.
 *
 * This first version fixes the public API others import; the evaluator behind it is being filled in.
 */
import type { SheetCell, SheetFile } from '../schema/sheet'
import type { CellResult, EvaluationResult } from '../schema/result'

export type { CellResult, EvaluationResult } from '../schema/result'

export const ENGINE_VERSION = '0.1.0'

export interface EngineOptions {
  /** Wall-clock budget for one cell's evaluation, ms (checked between operations). Default 2000. */
  timeBudgetMs?: number
  /** Largest array one operation may produce. Default 1,000,000. */
  maxElements?: number
  /** Progress of long cells (sweeps, model fits), fraction 0–1. */
  onProgress?: (cellId: string, fraction: number) => void
}

/** Evaluates a whole sheet file and returns the DESIGN §5 result object. Never throws. */
export function evaluateSheet(file: SheetFile, options?: EngineOptions): EvaluationResult {
  const engine = new SheetEngine(options)
  let n = 0
  const cells = file.cells.map((c) => (c.id ? (c as SheetCell) : ({ ...c, id: `cell-${++n}` } as SheetCell)))
  return engine.load(cells, file.title)
}

/** An incrementally re-evaluated sheet: load once, then apply edits and read results. */
export class SheetEngine {
  private cells: SheetCell[] = []
  private title = ''
  constructor(options?: EngineOptions) {
    void options
  }
  load(cells: SheetCell[], title?: string): EvaluationResult {
    this.cells = [...cells]
    this.title = title ?? ''
    return this.results()
  }
  update(cellId: string, cell: SheetCell | null): string[] {
    const i = this.cells.findIndex((c) => c.id === cellId)
    if (i >= 0) {
      if (cell) this.cells[i] = cell
      else this.cells.splice(i, 1)
    }
    return cell ? [cellId] : []
  }
  insert(cell: SheetCell, index: number): string[] {
    this.cells.splice(index, 0, cell)
    return [cell.id]
  }
  move(cellId: string, index: number): void {
    const i = this.cells.findIndex((c) => c.id === cellId)
    if (i < 0) return
    const [c] = this.cells.splice(i, 1)
    this.cells.splice(index, 0, c)
  }
  results(): EvaluationResult {
    return { title: this.title, engine: ENGINE_VERSION, cells: this.cells.map((c, i) => this.resultAt(c, i)) }
  }
  resultOf(cellId: string): CellResult | undefined {
    const i = this.cells.findIndex((c) => c.id === cellId)
    return i < 0 ? undefined : this.resultAt(this.cells[i], i)
  }
  private resultAt(c: SheetCell, index: number): CellResult {
    const base = { index, id: c.id, name: c.name, kind: c.kind }
    if (c.kind === 'note' || c.kind === 'figure') return { ...base, status: 'ok', value: null, warnings: [] }
    return { ...base, status: 'error', error: 'the evaluator is not built yet in this version', warnings: [] }
  }
}

export interface CatalogFunction {
  name: string
  signature: string
  doc: string
  group: string
}
export interface Catalog {
  functions: CatalogFunction[]
  units: string[]
  constants: { name: string; doc: string }[]
}

/** Function names, signatures, one-line docs and groups; unit names; constants — for autocomplete and help. */
export function libraryCatalog(): Catalog {
  return { functions: [], units: [], constants: [] }
}
