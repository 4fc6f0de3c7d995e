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

const scope = self as unknown as DedicatedWorkerGlobalScope

/** Progress of one cell is posted at most this often (ms), plus always at the end. */
const PROGRESS_INTERVAL_MS = 80

let currentSeq = 0
const lastProgress = new Map<string, number>()

function post(message: FromWorker): void {
  if (message.type === 'results') {
    // long arrays travel as transferred buffers (see pack.ts)
    const { results, transfer } = packResults(message.results)
    scope.postMessage({ ...message, results }, transfer)
    return
  }
  scope.postMessage(message)
}

function onProgress(cellId: string, fraction: number): void {
  const now = performance.now()
  const last = lastProgress.get(cellId) ?? -Infinity
  if (fraction < 1 && now - last < PROGRESS_INTERVAL_MS) return
  lastProgress.set(cellId, now)
  post({ type: 'progress', seq: currentSeq, id: cellId, fraction })
}

let engine = new SheetEngine({ onProgress })
let mirror = new EngineMirror(engine)

function load(title: string, cells: SheetCell[]): CellResult[] {
  engine = new SheetEngine({ onProgress })
  mirror = new EngineMirror(engine)
  mirror.reset(cells)
  return engine.load(cells, title).cells
}

scope.onmessage = (event: MessageEvent<ToWorker>) => {
  const message = event.data
  currentSeq = message.seq
  const started = performance.now()
  try {
    if (message.type === 'load') {
      const results = load(message.title, message.cells)
      post({ type: 'results', seq: message.seq, complete: true, results, recomputed: mirror.order.slice(), ms: performance.now() - started })
      return
    }
    const { recomputed, structural } = mirror.apply(message.order, message.changed)
    const results = structural
      ? engine.results().cells
      : [...recomputed].map((id) => engine.resultOf(id)).filter((r): r is CellResult => r !== undefined)
    post({ type: 'results', seq: message.seq, complete: structural, results, recomputed: [...recomputed], ms: performance.now() - started })
  } catch (err) {
    post({ type: 'failed', seq: message.seq, message: err instanceof Error ? err.message : String(err) })
  }
}

post({ type: 'ready', engine: ENGINE_VERSION, catalog: libraryCatalog() })
