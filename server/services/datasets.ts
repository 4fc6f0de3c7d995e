/**
 * Datasets: the measured numbers behind spectrum cells, stored once per upload (rows never change) and named by id
 * from the live document, which carries only their column metadata. Here: storing an upload, reading a dataset's
 * columns (cached: rows never change), writing the numbers into a sheet file for export, evaluation and snapshots
 * (`inlineDatasets`), and storing the inline columns of an imported sheet file (`storeInlineDatasets`).
 */
import { eq } from 'drizzle-orm'
import type { Db } from '../db/client'
import { datasets } from '../db/tables'
import type { SheetFile, SpectrumCell } from '../../shared/schema/sheet'
import { fileForm, inlineColumns, metadataColumns, needsDataset, type StoredColumn } from '../../shared/import/spectrumCell'
import { newId } from './tokens'

export interface DatasetColumnMeta {
  name: string
  quantity?: string
  unit: string
  count: number
}

export interface StoredDataset {
  id: string
  labId: string
  sheetId: string | null
  name: string
  sourceName: string | null
  uploadedBy: string | null
  createdAt: number
  columns: (DatasetColumnMeta & { values: Float64Array })[]
}

export interface NewDataset {
  labId: string
  sheetId: string | null
  name: string
  sourceName?: string | null
  uploadedBy: string | null
  columns: readonly StoredColumn[]
}

/** Every column's values as one little-endian Float64 blob, in column order. */
function packColumns(columns: readonly StoredColumn[]): Buffer {
  const total = columns.reduce((n, c) => n + c.values.length, 0)
  const buf = Buffer.alloc(total * 8)
  let offset = 0
  for (const c of columns) {
    for (let i = 0; i < c.values.length; i++) {
      const v = c.values[i]
      buf.writeDoubleLE(typeof v === 'number' ? v : NaN, offset)
      offset += 8
    }
  }
  return buf
}

/** Stores a dataset; returns its id. Call inside the caller's transaction when other rows go with it. */
export async function storeDataset(db: Db, d: NewDataset): Promise<string> {
  const id = `ds_${newId()}`
  const meta: DatasetColumnMeta[] = d.columns.map((c) => ({ name: c.name, ...(c.quantity ? { quantity: c.quantity } : {}), unit: c.unit, count: c.values.length }))
  await db
    .insert(datasets)
    .values({
      id, labId: d.labId, sheetId: d.sheetId, name: d.name, sourceName: d.sourceName ?? null, uploadedBy: d.uploadedBy,
      createdAt: Date.now(), columns: JSON.stringify(meta), values: packColumns(d.columns),
    })
  return id
}

/** Decoded datasets by id; rows never change, so an entry is valid until it is pushed out. */
const cache = new Map<string, StoredDataset>()
/** Numbers kept in the cache at most (about 40 MB). */
const CACHE_NUMBERS = 5_000_000
let cachedNumbers = 0

function remember(d: StoredDataset): void {
  const n = d.columns.reduce((s, c) => s + c.values.length, 0)
  if (n > CACHE_NUMBERS) return
  while (cachedNumbers + n > CACHE_NUMBERS && cache.size > 0) {
    const [oldest, old] = cache.entries().next().value as [string, StoredDataset]
    cache.delete(oldest)
    cachedNumbers -= old.columns.reduce((s, c) => s + c.values.length, 0)
  }
  cache.set(d.id, d)
  cachedNumbers += n
}

/** A dataset with its columns' values (cached), or null. */
export async function datasetById(db: Db, id: string): Promise<StoredDataset | null> {
  const hit = cache.get(id)
  if (hit) {
    // most recently used last
    cache.delete(id)
    cache.set(id, hit)
    return hit
  }
  const [row] = await db.select().from(datasets).where(eq(datasets.id, id))
  if (!row) return null
  const meta = JSON.parse(row.columns) as DatasetColumnMeta[]
  const blob = row.values
  // copied out of the row's buffer so the Float64Array is aligned and owns its memory
  const all = new Float64Array(blob.byteLength / 8)
  for (let i = 0; i < all.length; i++) all[i] = blob.readDoubleLE(i * 8)
  let offset = 0
  const columns = meta.map((m) => {
    const values = all.subarray(offset, offset + m.count)
    offset += m.count
    return { ...m, values }
  })
  const d: StoredDataset = {
    id: row.id, labId: row.labId, sheetId: row.sheetId, name: row.name, sourceName: row.sourceName, uploadedBy: row.uploadedBy,
    createdAt: row.createdAt, columns,
  }
  remember(d)
  return d
}

/**
 * The sheet file with every stored dataset's numbers written into its spectrum cells (DESIGN §5: a file stands
 * alone: the cells lose their `datasetId` and column metadata, as a file is written). Only datasets of `labId` are read: a document that names another lab's dataset gets nothing from it (the
 * cell then reports that its data is not loaded). Cells that already carry values are left as they are.
 */
export async function inlineDatasets<F extends SheetFile>(db: Db, file: F, labId: string): Promise<F> {
  let changed = false
  const cells: F['cells'] = []
  for (const cell of file.cells) {
    if (!needsDataset(cell)) {
      cells.push(cell)
      continue
    }
    const d = await datasetById(db, cell.datasetId)
    if (!d || d.labId !== labId) cells.push(cell)
    else {
      changed = true
      cells.push(fileForm(cell, d.columns))
    }
  }
  return changed ? { ...file, cells } : file
}

/**
 * Stores the inline columns of a sheet file's spectrum cells as datasets of the lab and returns the file with those
 * cells in their live-document form (metadata and `datasetId`, no numbers). Run inside the sheet's creating
 * transaction, so a failure stores nothing.
 */
export async function storeInlineDatasets<F extends SheetFile>(db: Db, file: F, where: { labId: string; sheetId: string; userId: string }): Promise<F> {
  const cells: F['cells'] = []
  for (const cell of file.cells) {
    const columns = cell.kind === 'spectrum' ? inlineColumns(cell) : null
    if (cell.kind !== 'spectrum' || !columns || columns.length === 0) {
      cells.push(cell)
      continue
    }
    const id = await storeDataset(db, { labId: where.labId, sheetId: where.sheetId, name: cell.name, sourceName: cell.source ?? null, uploadedBy: where.userId, columns })
    const live: SpectrumCell = { ...cell, datasetId: id, columns: metadataColumns(columns) }
    cells.push(live)
  }
  return { ...file, cells }
}

/** Empties the decoded-dataset cache (tests). */
export function clearDatasetCache(): void {
  cache.clear()
  cachedNumbers = 0
}
