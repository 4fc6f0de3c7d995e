/**
 * CSV of one cell of a snapshot (or of what a guest link shows), from its stored results and file, written by the same
 * shared code as the live sheet's CSV (shared/export/csv.ts), so both downloads of one series are the same file.
 */
import type { EvaluationResult } from '../../shared/schema/result'
import type { SheetCell } from '../../shared/schema/sheet'
import { cellCsvColumns, CsvError, csvFileName, toCsv } from '../../shared/export/csv'
import { HttpError, notFound } from '../errors'
import { snapshotContent, type SnapshotRow } from './snapshots'

/** The CSV text and download name of a snapshot cell's series (404 no such cell, 422 no series). */
export function snapshotCellCsv(row: Pick<SnapshotRow, 'file' | 'results' | 'docState'>, cellId: string, extra: readonly string[] = []): { fileName: string; csv: string } {
  const { file, results } = snapshotContent(row)
  const cells = file.cells as SheetCell[]
  const cell = cells.find((c) => c.id === cellId)
  if (!cell) throw notFound('No cell with that id in this snapshot.')
  try {
    const csv = toCsv(cellCsvColumns(results as EvaluationResult, cells, cellId, extra))
    return { fileName: csvFileName(file.title, cell.name), csv }
  } catch (err) {
    if (err instanceof CsvError) throw new HttpError(422, err.message)
    throw err
  }
}
