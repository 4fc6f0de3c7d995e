/**
 * The sheet engine: formula language with units, dependency graph, evaluation, fits and sweeps. Pure TypeScript, run
 * identically by the browser worker, the server and the command-line evaluator.
 *
 * - `evaluateSheet(file)` → the DESIGN §5 result object, in one call
 * - `new SheetEngine(options)`: `load`, then `update` / `insert` / `move` re-evaluate only what an edit touches
 * - `libraryCatalog()`: functions, units and constants for autocomplete and help
 */
import type { SheetFile } from '../schema/sheet'
import { withCellIds } from '../schema/sheet'
import type { EvaluationResult } from '../schema/result'
import { SheetEngine, type EngineOptions } from './engine'

export type { CellResult, EvaluationResult } from '../schema/result'
export { SheetEngine, ENGINE_VERSION, type EngineOptions } from './engine'
export { libraryCatalog, type Catalog, type CatalogFunction } from './catalog'
export { parseUnit, type UnitParse } from './units'
export { dimName, type Dim } from './dimensions'

/** Evaluates a whole sheet file (cells without an id get `cell-<n>`) and returns the result object. Never throws. */
export function evaluateSheet(file: SheetFile, options?: EngineOptions): EvaluationResult {
  let n = 0
  const sheet = withCellIds(file, () => `cell-${++n}`)
  return new SheetEngine(options).load(sheet.cells, file.title)
}
