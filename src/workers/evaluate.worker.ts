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

const scope = self as unknown as DedicatedWorkerGlobalScope

/** Progress of one cell is posted at most this often (ms), plus always at the end. */
const PROGRESS_INTERVAL_MS = 80

let currentSeq = 0
const lastProgress = new Map<string, number>()

function post(message: FromWorker): void {
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
/** Cell ids in the order the engine holds them. */
let order: string[] = []
/** The JSON text of each cell as the engine last read it, to skip no-op updates. */
let known = new Map<string, string>()

function load(title: string, cells: SheetCell[]): CellResult[] {
  engine = new SheetEngine({ onProgress })
  order = cells.map((c) => c.id)
  known = new Map(cells.map((c) => [c.id, JSON.stringify(c)]))
  return engine.load(cells, title).cells
}

/** Applies one batch; returns the recomputed ids and whether the order of cells changed. */
function applyChanges(nextOrder: string[], changed: SheetCell[]): { recomputed: Set<string>; structural: boolean } {
  const recomputed = new Set<string>()
  const add = (ids: string[]) => ids.forEach((id) => recomputed.add(id))
  const byId = new Map(changed.map((c) => [c.id, c]))
  const wanted = new Set(nextOrder)
  let structural = false

  for (const id of order) {
    if (wanted.has(id)) continue
    add(engine.update(id, null))
    known.delete(id)
    structural = true
  }
  order = order.filter((id) => wanted.has(id))

  nextOrder.forEach((id, index) => {
    if (!known.has(id)) {
      const cell = byId.get(id)
      if (!cell) return // announced in the order but not sent: the next batch carries it
      add(engine.insert(cell, index))
      add([id])
      known.set(id, JSON.stringify(cell))
      order.splice(index, 0, id)
      structural = true
    } else if (order[index] !== id) {
      engine.move(id, index)
      order.splice(order.indexOf(id), 1)
      order.splice(index, 0, id)
      structural = true
    }
  })

  for (const cell of changed) {
    if (!wanted.has(cell.id)) continue
    const text = JSON.stringify(cell)
    if (known.get(cell.id) === text) continue
    known.set(cell.id, text)
    add(engine.update(cell.id, cell))
  }
  return { recomputed, structural }
}

scope.onmessage = (event: MessageEvent<ToWorker>) => {
  const message = event.data
  currentSeq = message.seq
  const started = performance.now()
  try {
    if (message.type === 'load') {
      const results = load(message.title, message.cells)
      post({ type: 'results', seq: message.seq, complete: true, results, recomputed: order.slice(), ms: performance.now() - started })
      return
    }
    const { recomputed, structural } = applyChanges(message.order, message.changed)
    const results = structural
      ? engine.results().cells
      : [...recomputed].map((id) => engine.resultOf(id)).filter((r): r is CellResult => r !== undefined)
    post({ type: 'results', seq: message.seq, complete: structural, results, recomputed: [...recomputed], ms: performance.now() - started })
  } catch (err) {
    post({ type: 'failed', seq: message.seq, message: err instanceof Error ? err.message : String(err) })
  }
}

post({ type: 'ready', engine: ENGINE_VERSION, catalog: libraryCatalog() })
