/**
 * A snapshot's sheet file as the client uses it: checked by the sheet schema, its cells with their ids (restoring
 * and comments need them), and a plain sheet file without the stored results for importing into a new sheet.
 */
import { parseSheetFile } from '../../../shared/schema/sheet'
import type { SheetCell, SheetFile } from '../../../shared/schema/sheet'
import { newCellId } from '../../../shared/doc/sheetDoc'

/** The snapshot's file, validated; a file the schema refuses is reported with its first problem. */
export function checkedFile(file: unknown): SheetFile {
  const parsed = parseSheetFile(file)
  if (!parsed.ok) {
    const first = parsed.issues[0]
    throw new Error(`The snapshot's sheet file could not be read${first ? ` (${first.path}: ${first.message})` : ''}.`)
  }
  return parsed.value
}

/** The cells of a snapshot's file, each with its id (a cell stored without one gets a fresh id). */
export function snapshotCells(file: unknown): SheetCell[] {
  return checkedFile(file).cells.map((c) => ({ ...c, id: c.id ?? newCellId() }) as SheetCell)
}

/** The file to import as a new sheet: the same cells (the schema drops the snapshot's stored results and hash). */
export function importableFile(file: unknown, title: string): SheetFile {
  return { ...checkedFile(file), title }
}
