/**
 * Runs the sheet engine in a Web Worker and keeps the results store current. The page watches the cell array deeply,
 * notes which cells changed (by id), marks them and their dependents stale at once, and sends the worker one batch at
 * a time: while the worker is busy (a long sweep or fit), further edits gather into the next batch, so typing never
 * waits and the worker never falls behind by more than one batch.
 */
import { onScopeDispose, ref } from 'vue'
import * as Y from 'yjs'
import { entryCells, mapToCell, type CellMap } from '../../shared/doc/sheetDoc'
import type { SheetCell } from '../../shared/schema/sheet'
import type { CellResult } from '../../shared/schema/result'
import type { FromWorker, ToWorker } from '@/workers/protocol'
import { dependentsOf } from '@/components/sheet/references'
import { unpackResults } from '@/workers/pack'
import type { useSheetStore } from '@/stores/sheet'
import { mark } from '@/lib/marks'

type SheetStore = ReturnType<typeof useSheetStore>

/** After this many unexpected worker failures in a row the page stops restarting it and says so. */
const MAX_RESTARTS = 3

/** Results kept in this browser between visits (useSheetDoc's readKeptResults / keepResults). */
export interface ResultKeeper {
  read(): Promise<CellResult[]>
  keep(results: Record<string, CellResult>): void
}

/** How long the results must stay unchanged before they are written to the browser's storage. */
const KEEP_AFTER_MS = 1500

export function useEvaluator(cells: Y.Array<CellMap>, store: SheetStore, title: () => string, keeper?: ResultKeeper) {
  const busy = ref(false)
  const state = ref<'starting' | 'ready' | 'failed'>('starting')
  const error = ref('')

  let worker: Worker | null = null
  let restarts = 0
  let lastSent = 0
  let inFlight: number | null = null
  /** Whether the worker's engine holds any cells (an empty one gets a full load instead of insertions). */
  let workerHasCells = false
  let needsLoad = true
  const dirty = new Set<string>()
  let orderChanged = false
  /** Latest batch number whose answer clears a cell's stale mark. */
  const staleUntil = new Map<string, number>()
  /** Plain cells by id and the document order: what the page renders and what is sent to the worker. */
  const plain = new Map<string, SheetCell>()
  let order: string[] = []
  let flushTimer: ReturnType<typeof setTimeout> | null = null
  /** Whether the worker has answered yet; until then results kept from the last visit may be shown. */
  let answered = false
  /** Cells showing a kept result (marked recomputing) that the worker has not replaced yet. */
  const seeded = new Set<string>()
  let keepTimer: ReturnType<typeof setTimeout> | null = null

  function scheduleKeep(): void {
    if (!keeper) return
    if (keepTimer !== null) clearTimeout(keepTimer)
    keepTimer = setTimeout(() => {
      keepTimer = null
      if (state.value !== 'failed' && !busy.value) keeper.keep(store.results)
    }, KEEP_AFTER_MS)
  }

  /** Shows the results kept from the last visit, marked recomputing, for cells the worker has not answered yet. */
  function showKept(kept: CellResult[]): void {
    if (answered || kept.length === 0) return
    const fresh = kept.filter((r) => r.id && plain.has(r.id) && !store.results[r.id])
    if (fresh.length === 0) return
    mark('pn:kept-results')
    store.applyResults(fresh, false)
    for (const r of fresh) seeded.add(r.id!)
    store.markStale([...seeded])
  }

  function startWorker(): void {
    worker = new Worker(new URL('../workers/evaluate.worker.ts', import.meta.url), { type: 'module', name: 'penumbra-evaluate' })
    worker.onmessage = (event: MessageEvent<FromWorker>) => onMessage(event.data)
    worker.onerror = (event: ErrorEvent) => {
      event.preventDefault()
      fail(event.message || 'the evaluator could not start')
    }
    inFlight = null
    needsLoad = true
    workerHasCells = false
  }

  function fail(message: string): void {
    worker?.terminate()
    worker = null
    busy.value = false
    store.clearProgress()
    if (restarts < MAX_RESTARTS) {
      restarts++
      store.evaluatorError = `The evaluator stopped (${message}); it was restarted and the sheet recomputed.`
      startWorker()
      scheduleFlush()
    } else {
      state.value = 'failed'
      error.value = message
      store.evaluatorError = `The evaluator stopped (${message}). Results are not being updated; reload the page to try again. Your edits are still saved.`
    }
  }

  function onMessage(message: FromWorker): void {
    switch (message.type) {
      case 'ready':
        mark('pn:evaluator-ready')
        state.value = 'ready'
        store.catalog = message.catalog
        store.engineVersion = message.engine
        break
      case 'partial': {
        mark('pn:first-results')
        // cells done before a long sweep or fit of the batch in flight: shown now, no longer stale
        const results = unpackResults(message.results)
        store.applyResults(results, false)
        answered = true
        const replaced = results.map((r) => r.id).filter((id): id is string => !!id && seeded.delete(id))
        store.clearStale(replaced.filter((id) => !staleUntil.has(id)))
        const done = results.map((r) => r.id).filter((id): id is string => !!id && (staleUntil.get(id) ?? 0) <= message.seq)
        for (const id of done) staleUntil.delete(id)
        store.clearStale(done)
        break
      }
      case 'progress':
        store.setProgress(message.id, message.fraction)
        break
      case 'results': {
        mark('pn:first-results')
        mark('pn:all-results')
        restarts = 0
        store.applyResults(unpackResults(message.results), message.complete)
        for (const id of message.recomputed) store.setProgress(id, null)
        const cleared: string[] = []
        for (const [id, until] of staleUntil) {
          if (until <= message.seq) {
            cleared.push(id)
            staleUntil.delete(id)
          }
        }
        store.clearStale(cleared)
        store.lastEvaluationMs = message.ms
        answered = true
        if (message.complete && seeded.size > 0) {
          store.clearStale([...seeded].filter((id) => !staleUntil.has(id)))
          seeded.clear()
        }
        scheduleKeep()
        if (store.evaluatorError && state.value !== 'failed') store.evaluatorError = ''
        inFlight = null
        busy.value = false
        if (dirty.size > 0 || orderChanged || needsLoad) scheduleFlush()
        break
      }
      case 'failed':
        fail(message.message)
        break
    }
  }

  function send(message: ToWorker): void {
    inFlight = message.seq
    busy.value = true
    worker?.postMessage(message)
  }

  function flush(): void {
    flushTimer = null
    if (!worker || inFlight !== null) return
    if (!needsLoad && dirty.size === 0 && !orderChanged) return
    const seq = ++lastSent
    const all = order.map((id) => plain.get(id)).filter((c): c is SheetCell => !!c)
    // A first batch, or one touching most of the sheet (the initial sync, an import), is a full load.
    if (needsLoad || !workerHasCells || dirty.size * 2 > Math.max(order.length, 1)) {
      send({ type: 'load', seq, title: title(), cells: all })
      needsLoad = false
    } else {
      const changed = [...dirty].map((id) => plain.get(id)).filter((c): c is SheetCell => !!c)
      send({ type: 'changes', seq, order: order.slice(), changed })
    }
    workerHasCells = order.length > 0
    dirty.clear()
    orderChanged = false
  }

  function scheduleFlush(): void {
    if (flushTimer === null) flushTimer = setTimeout(flush, 0)
  }

  /** Re-reads the given cells (and the order when it changed) from the document into the plain snapshot. */
  function refresh(changedIds: Set<string>, structural: boolean): void {
    const before = order.map((id) => plain.get(id)).filter((c): c is SheetCell => !!c)
    if (structural) {
      // entries the app cannot read as cells become placeholders the page shows as invalid (entryCells)
      const reread = (map: CellMap, id: string) => {
        const known = plain.get(id)
        if (known && !changedIds.has(id)) return known
        changedIds.add(id)
        return mapToCell(map)
      }
      const entries = entryCells(cells as unknown as Y.Array<unknown>, reread) as SheetCell[]
      const nextOrder: string[] = []
      for (const cell of entries) {
        nextOrder.push(cell.id)
        // a cell read again, or a placeholder (made anew each time: its id is a position, whatever stands there now)
        if (plain.get(cell.id) !== cell) {
          plain.set(cell.id, cell)
          changedIds.add(cell.id)
        }
      }
      const seen = new Set(nextOrder)
      for (const id of [...plain.keys()]) if (!seen.has(id)) plain.delete(id)
      if (nextOrder.join('\n') !== order.join('\n')) orderChanged = true
      order = nextOrder
    } else {
      for (const map of cells.toArray() as unknown[]) {
        if (!(map instanceof Y.Map)) continue
        const id = String(map.get('id') ?? '')
        if (changedIds.has(id)) plain.set(id, mapToCell(map))
      }
    }
    for (const id of changedIds) dirty.add(id)
    const after = order.map((id) => plain.get(id)).filter((c): c is SheetCell => !!c)
    store.setCells(after)

    const nextSeq = (inFlight ?? lastSent) + 1
    const staleIds = new Set([...dependentsOf(before, changedIds), ...dependentsOf(after, changedIds)])
    for (const id of staleIds) if (plain.has(id)) staleUntil.set(id, nextSeq)
    store.markStale([...staleIds].filter((id) => plain.has(id) && store.results[id]))
    scheduleFlush()
  }

  const observer = (events: Y.YEvent<Y.AbstractType<unknown>>[]) => {
    const changed = new Set<string>()
    let structural = false
    for (const event of events) {
      if (event.target === cells) {
        structural = true
        continue
      }
      let type: Y.AbstractType<unknown> | null = event.target
      while (type && type.parent !== cells) type = type.parent as Y.AbstractType<unknown> | null
      if (type instanceof Y.Map) {
        const id = type.get('id')
        if (typeof id === 'string') changed.add(id)
      }
    }
    refresh(changed, structural)
  }
  cells.observeDeep(observer)

  startWorker()
  refresh(new Set(), true)
  keeper?.read().then(showKept, () => undefined)

  /** Recomputes the whole sheet from scratch (after a title change or on request). */
  function reload(): void {
    needsLoad = true
    scheduleFlush()
  }

  onScopeDispose(() => {
    cells.unobserveDeep(observer)
    if (flushTimer !== null) clearTimeout(flushTimer)
    if (keepTimer !== null) clearTimeout(keepTimer)
    worker?.terminate()
    worker = null
  })

  return { busy, state, error, reload }
}
