/**
 * The open sheet: its metadata (title, lab, the caller's role), the cells as plain objects in document order, and the
 * evaluation results from the worker, keyed by cell id and by cell name. The live document itself lives in
 * useSheetDoc; this store holds what the page renders.
 */
import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { getSheet } from '@/api/sheets'
import type { SheetCell } from '../../shared/schema/sheet'
import type { CellResult } from '../../shared/schema/result'
import type { LibraryCatalog } from '@/workers/protocol'

export type SheetMeta = Awaited<ReturnType<typeof getSheet>>

/** Roles that may change cells (the server enforces the same rule on every websocket message). */
const WRITE_ROLES = new Set(['owner', 'editor'])

export const useSheetStore = defineStore('sheet', () => {
  const meta = shallowRef<SheetMeta | null>(null)
  const loadError = ref('')
  const cells = shallowRef<SheetCell[]>([])
  const results = shallowRef<Record<string, CellResult>>({})
  /** Cells whose shown result predates the latest edit (recomputing). */
  const stale = ref<Record<string, true>>({})
  /** Fraction done (0–1) of long sweeps and fits while they run. */
  const progress = ref<Record<string, number>>({})
  const catalog = shallowRef<LibraryCatalog | null>(null)
  const engineVersion = ref('')
  /** A plain sentence when the evaluator itself failed (cell errors are in the results). */
  const evaluatorError = ref('')
  /** Milliseconds the worker spent on its last batch. */
  const lastEvaluationMs = ref<number | null>(null)

  const readonly = computed(() => !meta.value || !WRITE_ROLES.has(meta.value.role))

  const resultsByName = computed<Record<string, CellResult>>(() => {
    const out: Record<string, CellResult> = {}
    for (const cell of cells.value) {
      const r = results.value[cell.id]
      if (r && cell.name) out[cell.name] = r
    }
    return out
  })

  const cellsById = computed(() => new Map(cells.value.map((c) => [c.id, c])))
  const names = computed(() => cells.value.map((c) => c.name).filter((n): n is string => !!n))

  async function open(sheetId: string): Promise<SheetMeta | null> {
    loadError.value = ''
    meta.value = null
    cells.value = []
    results.value = {}
    stale.value = {}
    progress.value = {}
    evaluatorError.value = ''
    try {
      meta.value = await getSheet(sheetId)
    } catch (err) {
      loadError.value = err instanceof Error ? err.message : String(err)
    }
    return meta.value
  }

  function setCells(next: SheetCell[]): void {
    cells.value = next
  }

  /** Merges a batch from the worker; a complete batch replaces everything (cells that are gone drop out). */
  function applyResults(batch: CellResult[], complete: boolean): void {
    const next: Record<string, CellResult> = complete ? {} : { ...results.value }
    for (const r of batch) if (r.id) next[r.id] = r
    results.value = next
  }

  function markStale(ids: Iterable<string>): void {
    const next = { ...stale.value }
    for (const id of ids) next[id] = true
    stale.value = next
  }

  function clearStale(ids: Iterable<string>): void {
    const next = { ...stale.value }
    for (const id of ids) delete next[id]
    stale.value = next
  }

  function setProgress(id: string, fraction: number | null): void {
    const next = { ...progress.value }
    if (fraction === null || fraction >= 1) delete next[id]
    else next[id] = fraction
    progress.value = next
  }

  function clearProgress(): void {
    progress.value = {}
  }

  return {
    meta,
    loadError,
    cells,
    results,
    stale,
    progress,
    catalog,
    engineVersion,
    evaluatorError,
    lastEvaluationMs,
    readonly,
    resultsByName,
    cellsById,
    names,
    open,
    setCells,
    applyResults,
    markStale,
    clearStale,
    setProgress,
    clearProgress,
  }
})
