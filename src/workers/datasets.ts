/**
 * The worker's stored datasets: a spectrum cell of the live document carries only its columns' metadata and a
 * `datasetId`; before the engine sees it, its columns are filled with the dataset's values, fetched once by id and
 * kept (datasets never change). A cell whose dataset is still on its way is handed over unfilled (the engine says its
 * data is not loaded) and updated again when the values arrive.
 */
import { datasetReply } from '../../shared/schema/api'
import type { SheetCell } from '../../shared/schema/sheet'
import { needsDataset, withValues, type StoredColumn } from '../../shared/import/spectrumCell'
import type { IncrementalEngine } from './mirror'

export type FetchColumns = (datasetId: string) => Promise<StoredColumn[]>

/** GET /api/datasets/:id from the worker (same origin, the session cookie goes along). */
export const fetchDatasetColumns: FetchColumns = async (datasetId) => {
  const res = await fetch(`/api/datasets/${encodeURIComponent(datasetId)}`, { credentials: 'same-origin', headers: { Accept: 'application/json' } })
  const json: unknown = await res.json().catch(() => undefined)
  if (!res.ok) {
    const error = (json as { error?: unknown } | undefined)?.error
    throw new Error(typeof error === 'string' ? error : `the server answered ${res.status}`)
  }
  const parsed = datasetReply.safeParse(json)
  if (!parsed.success) throw new Error('the server sent the dataset in an unexpected shape')
  return parsed.data.columns
}

type Entry = { state: 'loading' } | { state: 'ready'; columns: StoredColumn[] } | { state: 'failed'; message: string }

/**
 * Wraps the engine the mirror drives: cells going in get their dataset's values. `onLoaded(ids)` runs after cells were
 * re-evaluated because their dataset arrived, with the ids the engine recomputed.
 */
export class DatasetFiller implements IncrementalEngine {
  private readonly entries = new Map<string, Entry>()
  /** The last cell given for each id, unfilled (to fill again when its dataset arrives). */
  private readonly latest = new Map<string, SheetCell>()

  constructor(
    private engine: IncrementalEngine,
    private readonly fetchColumns: FetchColumns,
    private readonly onLoaded: (recomputed: string[]) => void,
  ) {}

  /** After the worker replaced its engine (a full load). */
  rebind(engine: IncrementalEngine): void {
    this.engine = engine
    this.latest.clear()
  }

  /** The cell as the engine should see it, starting a fetch when its dataset is not here yet. */
  fill(cell: SheetCell): SheetCell {
    if (!cell || typeof cell !== 'object' || typeof cell.id !== 'string') return cell
    this.latest.set(cell.id, cell)
    if (!needsDataset(cell)) return cell
    const entry = this.entries.get(cell.datasetId)
    if (entry?.state === 'ready') return withValues(cell, entry.columns)
    if (!entry) this.load(cell.datasetId)
    return cell
  }

  /** For a result of a cell waiting for its dataset: what to say instead of the engine's "not loaded". */
  pendingMessage(datasetId: string): string | undefined {
    const entry = this.entries.get(datasetId)
    if (entry?.state === 'loading') return 'loading the measured data…'
    if (entry?.state === 'failed') return `the measured data (dataset ${datasetId}) could not be loaded: ${entry.message}`
    return undefined
  }

  /** The dataset a cell of the sheet names, if any. */
  datasetOf(cellId: string): string | undefined {
    const c = this.latest.get(cellId) as { datasetId?: unknown } | undefined
    return typeof c?.datasetId === 'string' ? c.datasetId : undefined
  }

  update(cellId: string, cell: SheetCell | null): string[] {
    if (!cell) this.latest.delete(cellId)
    return this.engine.update(cellId, cell ? this.fill(cell) : null)
  }

  insert(cell: SheetCell, index: number): string[] {
    return this.engine.insert(this.fill(cell), index)
  }

  move(cellId: string, index: number): void {
    this.engine.move(cellId, index)
  }

  private load(datasetId: string): void {
    this.entries.set(datasetId, { state: 'loading' })
    this.fetchColumns(datasetId).then(
      (columns) => {
        this.entries.set(datasetId, { state: 'ready', columns })
        this.refill(datasetId)
      },
      (err: unknown) => {
        this.entries.set(datasetId, { state: 'failed', message: err instanceof Error ? err.message : String(err) })
        this.refill(datasetId)
      },
    )
  }

  private refill(datasetId: string): void {
    const recomputed = new Set<string>()
    for (const [id, cell] of this.latest) {
      if ((cell as { datasetId?: unknown }).datasetId !== datasetId) continue
      recomputed.add(id)
      for (const r of this.engine.update(id, this.fill(cell))) recomputed.add(r)
    }
    if (recomputed.size) this.onLoaded([...recomputed])
  }
}
