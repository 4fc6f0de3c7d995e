/**
 * The live sheet document: one Yjs document per sheet.
 *   doc.getArray('cells')  — a Y.Array of Y.Map, one per cell (id, kind, name, unit and the kind's own fields);
 *                            formula sources (`source`) and note texts (`text`) are Y.Text so people can type at once.
 *   doc.getMap('meta')     — `title`.
 * These pure functions turn a sheet file into a document and back, so import, export, seeding and evaluation share
 * one path.
 */
import * as Y from 'yjs'
import { CELL_SCHEMAS, SHEET_FORMAT, SHEET_VERSION, keepsUnknownFields, type Cell, type CellKind, type DatasetColumn, type SheetCell, type SheetFile } from '../schema/sheet'

/** Fields held as Y.Text for concurrent typing. */
export const TEXT_FIELDS = ['source', 'text'] as const

/** Which field of which kind is a Y.Text: a formula's source and a note's text (a spectrum's `source` is a plain label). */
const TEXT_FIELD_OF_KIND: Partial<Record<CellKind, (typeof TEXT_FIELDS)[number]>> = { formula: 'source', note: 'text' }

/** True when `key` of a cell of `kind` is held as a Y.Text. */
export function isTextField(kind: unknown, key: string): boolean {
  return typeof kind === 'string' && TEXT_FIELD_OF_KIND[kind as CellKind] === key
}

export type CellMap = Y.Map<unknown>

export function cellsOf(doc: Y.Doc): Y.Array<CellMap> {
  return doc.getArray<CellMap>('cells')
}

export function metaOf(doc: Y.Doc): Y.Map<unknown> {
  return doc.getMap('meta')
}

/** A random cell id: short, URL-safe, collision-free in practice within one sheet. */
export function newCellId(): string {
  const bytes = new Uint8Array(9)
  globalThis.crypto.getRandomValues(bytes)
  let out = 'c'
  for (const b of bytes) out += (b % 36).toString(36)
  return out
}

/** Builds the Y.Map for one cell (not yet attached to a document). */
export function cellToMap(cell: Cell, id: string = cell.id ?? newCellId()): CellMap {
  const map = new Y.Map<unknown>()
  map.set('id', id)
  for (const [key, value] of Object.entries(cell)) {
    if (key === 'id' || value === undefined) continue
    if (isTextField(cell.kind, key) && typeof value === 'string') map.set(key, new Y.Text(value))
    else map.set(key, structuredCloneJson(value))
  }
  return map
}

/** Reads one cell map back as a plain cell object. */
export function mapToCell(map: CellMap): SheetCell {
  const out: Record<string, unknown> = {}
  for (const [key, value] of map.entries()) {
    const plain = value instanceof Y.Text ? value.toString() : value instanceof Y.AbstractType ? value.toJSON() : value
    // defined, not assigned: a key named __proto__ stays an own field (and fails validation) instead of a prototype
    Object.defineProperty(out, key, { value: plain, enumerable: true, writable: true, configurable: true })
  }
  return out as SheetCell
}

/** The kind given to a placeholder for an entry of the cells list the app cannot read as a cell (see entryCells). */
export const NOT_A_CELL = 'not-a-cell'

/** What a placeholder stands for, in words: "a string", "a second cell with the id c1" … */
export interface NotACell {
  id: string
  kind: typeof NOT_A_CELL
  entry: string
}

function entryNoun(entry: unknown): string {
  if (entry === null) return 'null'
  if (entry instanceof Y.AbstractType) return entry instanceof Y.Text ? 'a text' : entry instanceof Y.Array ? 'a list' : 'a shared type'
  if (Array.isArray(entry)) return 'a list'
  return typeof entry === 'object' ? 'a plain object' : `a ${typeof entry}`
}

/**
 * Every entry of the cells list as a cell, in order: cell maps as their cells (a map without a string id gets
 * `cell-<index>`; `read` may return a cell it already has for that map), and anything else (a string, a number, null, a plain object, a second map with an id already
 * used) as a placeholder of kind NOT_A_CELL with the id `entry-<index>`, which the page shows as an invalid cell
 * instead of failing on it. The server refuses such entries (server/collab/shape.ts); documents stored before that
 * check, or edited by hand, may still hold them.
 */
export function entryCells(cells: Y.Array<unknown>, read: (map: CellMap, id: string) => SheetCell = (map) => mapToCell(map)): (SheetCell | NotACell)[] {
  const out: (SheetCell | NotACell)[] = []
  const seen = new Set<string>()
  cells.toArray().forEach((entry, index) => {
    if (!(entry instanceof Y.Map)) {
      out.push({ id: `entry-${index}`, kind: NOT_A_CELL, entry: entryNoun(entry) })
      return
    }
    const own = entry.get('id')
    const id = typeof own === 'string' && own.length > 0 ? own : `cell-${index}`
    if (seen.has(id)) {
      out.push({ id: `entry-${index}`, kind: NOT_A_CELL, entry: `a second cell with the id ${id}` })
      return
    }
    seen.add(id)
    const cell = read(entry as CellMap, id)
    out.push(cell.id === id ? cell : { ...cell, id })
  })
  return out
}

/** The index in the cells list of the entry a cell id (or a placeholder's `entry-<index>`) names, or -1. */
export function entryIndex(cells: Y.Array<unknown>, id: string): number {
  const entries = cells.toArray()
  const i = entries.findIndex((m) => m instanceof Y.Map && m.get('id') === id)
  if (i >= 0) return i
  const m = /^entry-(\d+)$/.exec(id)
  return m && Number(m[1]) < entries.length ? Number(m[1]) : -1
}

/** Fills an empty document from a sheet file (cells without ids get new ones). Returns the document. */
export function sheetFileToDoc(file: SheetFile, doc: Y.Doc = new Y.Doc()): Y.Doc {
  doc.transact(() => {
    metaOf(doc).set('title', file.title)
    const cells = cellsOf(doc)
    if (cells.length > 0) cells.delete(0, cells.length)
    cells.push(file.cells.map((c) => cellToMap(c)))
  })
  return doc
}

export interface ExportOptions {
  /**
   * The columns of a stored dataset, for spectrum cells that point at one (`datasetId`): export inlines them so the
   * file stands alone. Returning undefined keeps the cell's own `columns`.
   */
  datasetColumns?: (datasetId: string) => Record<string, DatasetColumn> | undefined
}

/**
 * The sheet file a document holds (every cell with its id). Entries of `cells` that are not cell maps (a buggy or
 * hostile client can push anything into a Y.Array) are skipped; a cell map without a string id gets `cell-<index>`.
 */
export function docToSheetFile(doc: Y.Doc, options: ExportOptions = {}): SheetFile & { cells: SheetCell[] } {
  const title = metaOf(doc).get('title')
  const cells: SheetCell[] = []
  cellsOf(doc)
    .toArray()
    .forEach((item, index) => {
      if (!(item instanceof Y.Map)) return
      const cell = mapToCell(item) as SheetCell & Record<string, unknown>
      if (typeof cell.id !== 'string' || cell.id.length === 0) cell.id = `cell-${index}`
      // the file is strict: a field the cell's schema does not name (a client's own, or one stored before the server
      // checked edits) stays in the document but not in the file, so an export always imports again
      const schema = CELL_SCHEMAS.get(cell.kind)
      if (schema && !keepsUnknownFields(schema)) for (const key of Object.keys(cell)) if (!Object.hasOwn(schema.shape, key)) delete cell[key]
      if (cell.kind === 'spectrum' && typeof cell.datasetId === 'string' && options.datasetColumns) {
        const columns = options.datasetColumns(cell.datasetId)
        if (columns) cell.columns = columns
      }
      cells.push(cell)
    })
  return {
    format: SHEET_FORMAT,
    version: SHEET_VERSION,
    title: typeof title === 'string' && title.length > 0 ? title : 'Untitled sheet',
    cells,
  }
}

/** The encoded Yjs state of a sheet file: what a newly created sheet is seeded with. */
export function sheetFileToUpdate(file: SheetFile): Uint8Array {
  return Y.encodeStateAsUpdate(sheetFileToDoc(file))
}

/** Decodes a stored state (and optional later updates) into a fresh document. */
export function docFromUpdates(updates: Iterable<Uint8Array>): Y.Doc {
  const doc = new Y.Doc()
  doc.transact(() => {
    for (const u of updates) Y.applyUpdate(doc, u)
  })
  return doc
}

function structuredCloneJson<T>(value: T): T {
  return value === null || typeof value !== 'object' ? value : (JSON.parse(JSON.stringify(value)) as T)
}

/**
 * Restores a snapshot's cells into a live document as ONE transaction with the caller's origin, so the person's undo
 * manager (which tracks that origin) takes the whole restore back in one step, and other people see one change.
 * Cells the snapshot has unchanged (same id, same content) are kept as they are, so nobody's cursor in them jumps;
 * the others are replaced, and the order becomes the snapshot's. The title is the sheet's, not the snapshot's.
 */
export function restoreCells(doc: Y.Doc, cells: readonly Cell[], origin: unknown): void {
  doc.transact(() => {
    const live = cellsOf(doc)
    const wanted = cells.map((c, i) => ({ cell: c, id: c.id ?? `cell-${i}` }))
    const sameContent = (map: CellMap, cell: Cell) => JSON.stringify(sortedCell(mapToCell(map))) === JSON.stringify(sortedCell({ ...cell, id: map.get('id') as string }))
    // walk the snapshot's order; keep a live cell only where it is already next in line and unchanged
    let at = 0
    for (const { cell, id } of wanted) {
      const current = at < live.length ? live.get(at) : undefined
      if (current instanceof Y.Map && current.get('id') === id && sameContent(current, cell)) {
        at++
        continue
      }
      // remove a stale copy of this cell further down, then insert the snapshot's version here
      for (let j = live.length - 1; j >= at; j--) {
        const m = live.get(j)
        if (m instanceof Y.Map && m.get('id') === id) live.delete(j, 1)
      }
      live.insert(at, [cellToMap(cell, id)])
      at++
    }
    if (live.length > at) live.delete(at, live.length - at)
  }, origin)
}

function sortedCell(cell: object): Record<string, unknown> {
  return Object.fromEntries(Object.entries(cell).filter(([, v]) => v !== undefined).sort(([a], [b]) => (a < b ? -1 : 1)))
}
