/**
 * A sheet rendered from stored data (a snapshot's file and results) instead of the live document: the same cell
 * cards read it through the same SheetContext, with a local, unconnected Y.Doc and every editing operation refused.
 * No websocket, no worker: the results are the ones the server stored when the snapshot was frozen.
 */
import { onScopeDispose, ref, shallowRef, type Component } from 'vue'
import { ElMessage } from 'element-plus'
import * as Y from 'yjs'
import { Awareness } from 'y-protocols/awareness'
import type { WebsocketProvider } from 'y-websocket'
import { cellsOf, mapToCell, metaOf, sheetFileToDoc } from '../../shared/doc/sheetDoc'
import type { SheetCell, SheetFile } from '../../shared/schema/sheet'
import type { CellResult } from '../../shared/schema/result'
import type { SheetDoc } from './useSheetDoc'
import { usePresence } from './usePresence'
import { useSheetStore } from '@/stores/sheet'
import { buildVocabulary } from '@/components/cells/formulaLanguage'
import type { SheetContext } from '@/components/sheet/sheetContext'
import { createCardEditors } from '@/components/sheet/cardEditors'
import { NO_PENDING_EDITS } from '@/lib/localCopyPending'
import { messageOf } from '@/api/client'

/** Matches stored results to cells: by id where the result carries one, otherwise by position. */
export function resultsById(cells: readonly SheetCell[], results: readonly { index: number; id?: string }[]): Record<string, CellResult> {
  const out: Record<string, CellResult> = {}
  for (const r of results) {
    const id = r.id ?? cells[r.index]?.id
    if (id) out[id] = { ...(r as CellResult), id }
  }
  return out
}

/** A read-only stand-in for the live document, built from a sheet file. */
function staticDoc(file: SheetFile): SheetDoc {
  const doc = sheetFileToDoc(file)
  const cells = cellsOf(doc)
  const origin = { who: 'nobody: read only' }
  const refuse = () => false
  return {
    doc,
    cells,
    meta: metaOf(doc),
    awareness: new Awareness(doc),
    undoManager: new Y.UndoManager(cells),
    provider: shallowRef<WebsocketProvider | null>(null),
    readonly: true,
    keptOnDevice: ref(false),
    pending: shallowRef(NO_PENDING_EDITS),
    connection: ref('offline'),
    synced: ref(true),
    closedReason: ref(''),
    accessLost: ref(false),
    denied: ref(''),
    canUndo: ref(false),
    canRedo: ref(false),
    origin,
    mapOf: (id: string) => cells.toArray().find((m) => m.get('id') === id),
    indexOf: (id: string) => cells.toArray().findIndex((m) => m.get('id') === id),
    setFields: refuse,
    insertCell: () => null,
    insertCells: () => null,
    setFieldsStep: refuse,
    deleteCell: refuse,
    moveCell: refuse,
    duplicateCell: () => null,
    replaceCells: refuse,
    appendCells: refuse,
    undo: () => undefined,
    redo: () => undefined,
    transact: refuse,
    readKeptResults: async () => [],
    keepResults: () => undefined,
  }
}

/** What the snapshot's page adds to its read-only cards. */
export interface StaticSheetOptions {
  /** Drawn in every card's header (the comment badge). */
  cellAddon?: Component
  /**
   * Downloads a cell's series as CSV from the stored results (the snapshot's or the guest link's route). Without it
   * the cards offer no CSV button.
   */
  downloadCsv?: (cell: SheetCell) => Promise<unknown>
}

/** Fills the sheet store with a snapshot's cells and stored results and returns the context the cards need. */
export function useStaticSheet(file: SheetFile, results: readonly { index: number; id?: string }[], options: StaticSheetOptions = {}) {
  const store = useSheetStore()
  const { downloadCsv } = options
  const sheet = staticDoc(file)
  const cells = sheet.cells.toArray().map(mapToCell)
  store.setCells(cells)
  const byId = resultsById(cells, results)
  store.applyResults(Object.values(byId), true)
  store.clearProgress()
  const presence = usePresence(sheet.awareness, { id: 'snapshot-reader', name: '' })
  const context: SheetContext = {
    doc: sheet,
    presence,
    readonly: true,
    vocabulary: shallowRef(buildVocabulary(null, cells, byId)),
    vocabularyVersion: ref(0),
    focusCard: () => undefined,
    ops: {
      move: () => undefined,
      duplicate: () => undefined,
      remove: () => undefined,
      addAfter: () => undefined,
      edit: () => undefined,
      replaceData: () => undefined,
      downloadCsv: downloadCsv && ((cellId: string) => {
        const cell = cells.find((c) => c.id === cellId)
        if (cell) downloadCsv(cell).catch((err: unknown) => ElMessage.error(messageOf(err)))
      }),
    },
    editors: createCardEditors(),
    cellAddon: options.cellAddon,
  }
  onScopeDispose(() => {
    sheet.undoManager.destroy()
    sheet.awareness.destroy()
    sheet.doc.destroy()
  })
  return { cells, maps: new Map(sheet.cells.toArray().map((m) => [String(m.get('id')), m])), context }
}
