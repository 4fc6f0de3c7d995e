/// <reference lib="webworker" />
/**
 * The evaluation worker: one SheetEngine for the open sheet, fed incrementally so typing on the page never waits for
 * a sweep or a fit. It mirrors the document's cell order and the last text of every cell, turns each batch from the
 * page into engine removals, insertions, moves and updates, and posts back the results of the recomputed cells.
 */
import { ENGINE_VERSION, SheetEngine, libraryCatalog } from '../../shared/engine'
import type { SheetCell } from '../../shared/schema/sheet'
import type { CellResult } from '../../shared/schema/result'
import type { FromWorker, ToWorker } from './protocol'
import { EngineMirror } from './mirror'
import { packResults } from './pack'
import { DatasetFiller, fetchDatasetColumns } from './datasets'

const scope = self as unknown as DedicatedWorkerGlobalScope

/** Progress of one cell is posted at most this often (ms), plus always at the end. */
const PROGRESS_INTERVAL_MS = 80

let currentSeq = 0
const lastProgress = new Map<string, number>()
/** The result of each cell as last posted, to tell which cells a batch has recomputed so far. */
const posted = new Map<string, CellResult>()
/** The batch whose early results were already posted (once per batch, when its first long cell starts). */
let partialSeq = -1
/** Cell ids the engine holds, in order (for the early results of a batch). */
let knownIds: readonly string[] = []

function sameResult(a: CellResult | undefined, b: CellResult): boolean {
  return !!a && a.status === b.status && a.error === b.error && a.value === b.value && a.warnings === b.warnings && a.unit === b.unit
}

function remember(results: readonly CellResult[]): void {
  for (const r of results) if (r.id) posted.set(r.id, r)
}

/** A spectrum waiting for its stored dataset says so, instead of the engine's "not loaded". */
function withDatasetState(results: CellResult[]): CellResult[] {
  return results.map((r) => {
    if (r.kind !== 'spectrum' || r.status !== 'error' || !r.id) return r
    const datasetId = filler.datasetOf(r.id)
    const message = datasetId ? filler.pendingMessage(datasetId) : undefined
    return message ? { ...r, error: message } : r
  })
}

function post(message: FromWorker): void {
  if (message.type === 'results' || message.type === 'partial') {
    // long arrays travel as transferred buffers (see pack.ts)
    const { results, transfer } = packResults(withDatasetState(message.results))
    scope.postMessage({ ...message, results }, transfer)
    return
  }
  scope.postMessage(message)
}

/**
 * When a long sweep or fit starts, the cells computed before it in this batch are done: post them at once, so the
 * formula being typed shows its own result (or its error) instead of waiting seconds for the sweep that reads it.
 */
function postEarlyResults(runningId: string): void {
  if (partialSeq === currentSeq) return
  partialSeq = currentSeq
  const results: CellResult[] = []
  // the cells above the running one (cells below it usually wait for it); one the engine has not reached yet has
  // no state and reads "not evaluated", which is not a result to show
  for (const id of knownIds) {
    if (id === runningId) break
    const r = engine.resultOf(id)
    if (r && !(r.status === 'error' && r.error === 'not evaluated') && !sameResult(posted.get(id), r)) results.push(r)
  }
  if (results.length === 0) return
  remember(results)
  post({ type: 'partial', seq: currentSeq, results })
}

function onProgress(cellId: string, fraction: number): void {
  if (fraction < 1) postEarlyResults(cellId)
  const now = performance.now()
  const last = lastProgress.get(cellId) ?? -Infinity
  if (fraction < 1 && now - last < PROGRESS_INTERVAL_MS) return
  lastProgress.set(cellId, now)
  post({ type: 'progress', seq: currentSeq, id: cellId, fraction })
}

let engine = new SheetEngine({ onProgress })
/** Spectrum cells of the document name stored datasets: their values are fetched by id and filled in. */
const filler = new DatasetFiller(engine, fetchDatasetColumns, (recomputed) => {
  const results = recomputed.map((id) => engine.resultOf(id)).filter((r): r is CellResult => r !== undefined)
  remember(results)
  post({ type: 'partial', seq: currentSeq, results })
})
let mirror = new EngineMirror(filler)

function load(title: string, cells: SheetCell[]): CellResult[] {
  engine = new SheetEngine({ onProgress })
  filler.rebind(engine)
  mirror = new EngineMirror(filler)
  mirror.reset(cells)
  posted.clear()
  knownIds = cells.map((c) => c.id)
  return engine.load(cells.map((c) => filler.fill(c)), title).cells
}

scope.onmessage = (event: MessageEvent<ToWorker>) => {
  const message = event.data
  currentSeq = message.seq
  const started = performance.now()
  try {
    if (message.type === 'load') {
      const results = load(message.title, message.cells)
      remember(results)
      post({ type: 'results', seq: message.seq, complete: true, results, recomputed: mirror.order.slice(), ms: performance.now() - started })
      return
    }
    knownIds = message.order
    const { recomputed, structural } = mirror.apply(message.order, message.changed)
    const results = structural
      ? engine.results().cells
      : [...recomputed].map((id) => engine.resultOf(id)).filter((r): r is CellResult => r !== undefined)
    remember(results)
    post({ type: 'results', seq: message.seq, complete: structural, results, recomputed: [...recomputed], ms: performance.now() - started })
  } catch (err) {
    post({ type: 'failed', seq: message.seq, message: err instanceof Error ? err.message : String(err) })
  }
}

post({ type: 'ready', engine: ENGINE_VERSION, catalog: libraryCatalog() })
