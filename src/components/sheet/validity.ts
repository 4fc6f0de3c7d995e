/**
 * Each cell of the live document checked against the sheet-file schema before its card renders, so a malformed
 * cell (written by an older or faulty client) shows its problems on its own card instead of breaking the page.
 * Plain cells are replaced only when they change, so the check is cached per object.
 */
import { cell as cellSchema, toSchemaIssues, type SchemaIssue, type SheetCell } from '../../../shared/schema/sheet'
import { NOT_A_CELL, type NotACell } from '../../../shared/doc/sheetDoc'

const cache = new WeakMap<SheetCell, SchemaIssue[]>()

export function cellIssues(cell: SheetCell): SchemaIssue[] {
  let issues = cache.get(cell)
  if (!issues && (cell.kind as string) === NOT_A_CELL) {
    issues = [{ path: '', message: `this entry of the sheet is ${(cell as unknown as NotACell).entry}, not a cell` }]
    cache.set(cell, issues)
  }
  if (!issues) {
    const parsed = cellSchema.safeParse(cell)
    issues = parsed.success ? [] : toSchemaIssues(parsed.error)
    cache.set(cell, issues)
  }
  return issues
}
