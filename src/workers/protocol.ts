/**
 * Messages between the sheet page and the evaluation worker. The page owns the document; the worker owns one
 * SheetEngine and mirrors the cell order it was last told, so each batch carries only the cells that changed.
 */
import type { SheetCell } from '../../shared/schema/sheet'
import type { CellResult } from '../../shared/schema/result'

export interface LibraryFunction {
  name: string
  signature: string
  doc: string
  group: string
}

export interface LibraryCatalog {
  functions: LibraryFunction[]
  units: string[]
  constants: { name: string; doc: string }[]
}

/** Page → worker. */
export type ToWorker =
  /** Evaluate a whole sheet from scratch (first open, or after the worker was restarted). */
  | { type: 'load'; seq: number; title: string; cells: SheetCell[] }
  /**
   * The sheet after some edits: `order` is every cell id in document order, `changed` holds the cells (new or edited)
   * the worker must (re)read. Ids missing from `order` were deleted.
   */
  | { type: 'changes'; seq: number; order: string[]; changed: SheetCell[] }

/** Worker → page. */
export type FromWorker =
  | { type: 'ready'; engine: string; catalog: LibraryCatalog }
  /**
   * Results of one batch. `complete` is true when `results` holds every cell (a load or a change of order), so the
   * page drops results of cells that are gone; otherwise `results` holds only the recomputed cells.
   */
  | { type: 'results'; seq: number; complete: boolean; results: CellResult[]; recomputed: string[]; ms: number }
  /**
   * Early results of a batch that is still running: the cells computed before a long sweep or fit started. Only the
   * cells listed are done; the rest of the batch follows in `results`.
   */
  | { type: 'partial'; seq: number; results: CellResult[] }
  /** A long sweep or fit reporting how far it is (0–1). */
  | { type: 'progress'; seq: number; id: string; fraction: number }
  /** The engine itself failed (a bug, not a cell error): the page reloads the worker and says so. */
  | { type: 'failed'; seq: number; message: string }
