/**
 * The live document of one sheet: a Y.Doc synchronised with `/collab/<sheetId>` through y-websocket, its awareness
 * (presence), one Y.UndoManager for this person's own edits, and the editing operations the cell cards call.
 *
 * Readers (reviewer, viewer) get a provider that never sends document data: it does not answer the server's sync
 * step 1 and does not forward local updates, and every editing operation here refuses to run. The server drops
 * reader updates anyway; the client simply never tries.
 *
 * The document is also kept in this browser (src/lib/localCopy.ts, one IndexedDB database per signed-in person and
 * sheet) and loaded from there before connecting: edits made while the server is away survive a reload or a closed
 * tab and reach the server in the sync exchange after reconnecting. `pending` counts those edits for the connection
 * badge. For readers the kept copy is only a cache of what the server sent (see localCopy.ts).
 */
import { onScopeDispose, ref, shallowRef } from 'vue'
import * as Y from 'yjs'
import { WebsocketProvider, messageAuth, messageQueryAwareness, messageSync, messageAwareness } from 'y-websocket'
import * as authProtocol from 'y-protocols/auth'
import * as awarenessProtocol from 'y-protocols/awareness'
import * as syncProtocol from 'y-protocols/sync'
import * as decoding from 'lib0/decoding'
import * as encoding from 'lib0/encoding'
import { cellToMap, cellsOf, entryIndex, mapToCell, metaOf, newCellId, type CellMap } from '../../shared/doc/sheetDoc'
import type { Cell, SheetCell } from '../../shared/schema/sheet'
import { keepPageForOffline, openLocalCopy } from '@/lib/localCopy'
import { NO_PENDING_EDITS, noteChange, noteSent, restoredPending, type PendingEdits } from '@/lib/localCopyPending'
import { reportWaitingEdits } from '@/lib/waitingEdits'
import { useSessionStore } from '@/stores/session'
import { mark } from '@/lib/marks'
import { packKeptResults, unpackKeptResults } from '@/lib/keptResults'
import type { CellResult } from '../../shared/schema/result'

export type ConnectionState = 'connecting' | 'online' | 'offline'

export interface SheetDocOptions {
  /** True for reviewers and viewers. */
  readonly: boolean
  /** Whose copy to keep in this browser; the signed-in person when omitted (no copy when nobody is signed in). */
  userId?: string
}

/** How long to wait for the kept copy before connecting anyway (a browser whose storage hangs still gets the sheet). */
const LOCAL_COPY_WAIT_MS = 3000

/** The handler signature of y-websocket's message table. */
type MessageHandler = (encoder: encoding.Encoder, decoder: decoding.Decoder, provider: WebsocketProvider, emitSynced: boolean, messageType: number) => void

/** The websocket base for the current page: same origin, ws or wss. */
function collabBase(): string {
  const { protocol, host } = window.location
  return `${protocol === 'https:' ? 'wss' : 'ws'}://${host}/collab`
}

/** Makes a provider receive-only: it reads the server's document and never sends document data. */
function makeReceiveOnly(provider: WebsocketProvider, doc: Y.Doc): void {
  const handlers = (provider as unknown as { messageHandlers: MessageHandler[] }).messageHandlers
  handlers[messageSync] = (_encoder, decoder, p, emitSynced) => {
    const type = decoding.readVarUint(decoder)
    if (type === syncProtocol.messageYjsSyncStep1) {
      // The server asks what we have that it lacks; a reader never has anything to add, so no answer is sent.
      decoding.readVarUint8Array(decoder)
      return
    }
    if (type === syncProtocol.messageYjsSyncStep2) {
      syncProtocol.readSyncStep2(decoder, doc, p)
      if (emitSynced && !p.synced) p.synced = true
    } else if (type === syncProtocol.messageYjsUpdate) {
      syncProtocol.readUpdate(decoder, doc, p)
    }
  }
  handlers[messageQueryAwareness] = (encoder, _decoder, p) => {
    // Answer with our own presence only.
    encoding.writeVarUint(encoder, messageAwareness)
    encoding.writeVarUint8Array(encoder, awarenessProtocol.encodeAwarenessUpdate(p.awareness, [doc.clientID]))
  }
  const updateHandler = (provider as unknown as { _updateHandler: (u: Uint8Array, o: unknown) => void })._updateHandler
  doc.off('update', updateHandler)
}

/** A fresh copy of a cell map, for moving a cell (Y.Array has no move) or duplicating it. */
function copyMap(map: CellMap, id: string): CellMap {
  const copy = cellToMap(mapToCell(map), id)
  return copy
}

export function useSheetDoc(sheetId: string, options: SheetDocOptions) {
  const doc = new Y.Doc()
  const cells = cellsOf(doc)
  const meta = metaOf(doc)
  const awareness = new awarenessProtocol.Awareness(doc)
  /** Origin of this person's edits; the undo manager tracks only these (and the formula editors' own origins). */
  const origin = { who: 'this person' }
  const undoManager = new Y.UndoManager(cells, { trackedOrigins: new Set<unknown>([origin]), captureTimeout: 500 })
  const readonly = options.readonly

  const connection = ref<ConnectionState>('connecting')
  const synced = ref(false)
  /** Set when the server closed the connection for good (access revoked, sheet deleted): a plain sentence. */
  const closedReason = ref('')
  /** The server closed the connection because this person may no longer see the sheet (removed, or the sheet is gone). */
  const accessLost = ref(false)
  /** Set when the server refused an edit (the role was changed to a reader while the page was open). */
  const denied = ref('')
  const canUndo = ref(false)
  const canRedo = ref(false)
  const provider = shallowRef<WebsocketProvider | null>(null)
  /** True once the sheet is kept in this browser (IndexedDB works and the copy is open). */
  const keptOnDevice = ref(false)
  /** Edits made here that have not been sent to the server yet (always none for readers). */
  const pending = shallowRef<PendingEdits>(NO_PENDING_EDITS)

  const p = new WebsocketProvider(collabBase(), encodeURIComponent(sheetId), doc, {
    awareness,
    connect: false,
    disableBc: true,
    maxBackoffTime: 5000,
  })
  if (readonly) makeReceiveOnly(p, doc)
  ;(p as unknown as { messageHandlers: MessageHandler[] }).messageHandlers[messageAuth] = (_encoder, decoder) => {
    authProtocol.readAuthMessage(decoder, doc, (_doc, reason) => {
      denied.value = reason || 'the server refused a change'
    })
  }
  p.on('status', ({ status }) => {
    // a reconnection attempt after a lost connection stays "offline" until it succeeds
    if (status === 'connected') connection.value = 'online'
    else if (status === 'disconnected') connection.value = 'offline'
    else if (connection.value !== 'offline') connection.value = 'connecting'
    if (status !== 'connected') synced.value = false
  })
  p.on('sync', (state) => {
    if (state) mark('pn:sheet-synced')
    synced.value = state
  })
  // an attempt that never got through (the server is away when the page opens) says "offline", not "connecting"
  p.on('connection-close', () => {
    if (!p.wsconnected) connection.value = 'offline'
  })
  p.on('closed', ({ code, reason }) => {
    connection.value = 'offline'
    if (code === 4403 || code === 4404) {
      accessLost.value = true
      // the sheet is gone or no longer ours to see: its copy must not stay on this device
      void localCopy?.clear()
      keptOnDevice.value = false
      pending.value = NO_PENDING_EDITS
    }
    closedReason.value =
      reason ||
      (code === 4401
        ? 'Your session has ended; sign in again to keep working on this sheet.'
        : code === 4403
          ? 'You no longer have access to this sheet.'
          : code === 4404
            ? 'This sheet no longer exists.'
            : `The server closed the live connection (code ${code}).`)
  })
  provider.value = p

  // --- the copy kept in this browser, loaded before connecting ---
  const userId = options.userId ?? useSessionStore().user?.id ?? ''
  const localCopy = userId ? openLocalCopy(doc, userId, sheetId, readonly ? 'read' : 'edit') : null
  let disposed = false
  let started = false
  const start = () => {
    if (started || disposed) return
    started = true
    if (!closedReason.value) p.connect()
  }
  if (localCopy) {
    const waited = setTimeout(start, LOCAL_COPY_WAIT_MS)
    void localCopy.ready.then(({ available, pending: stored }) => {
      mark('pn:sheet-kept-copy')
      clearTimeout(waited)
      if (disposed) return
      keptOnDevice.value = available
      if (available && !readonly) {
        const restored = restoredPending(stored)
        if (restored.count > 0) setPending({ ...pending.value, count: pending.value.count + restored.count })
      }
      start()
    })
    localCopy.onGone(() => {
      keptOnDevice.value = false
    })
    keepPageForOffline([`/api/sheets/${encodeURIComponent(sheetId)}`])
  } else start()

  function setPending(next: PendingEdits): void {
    const before = pending.value
    if (next === before) return
    pending.value = next
    if (next.count !== before.count) {
      localCopy?.setPending(next.count)
      reportWaitingEdits(sheetId, next.count)
    }
  }
  /** This person's changes while not live are kept edits; the server's and the stored copy's updates are not. */
  doc.on('update', (_update: Uint8Array, updateOrigin: unknown) => {
    if (readonly || updateOrigin === p || (localCopy && updateOrigin === localCopy.origin())) return
    setPending(noteChange(pending.value, Date.now(), p.wsconnected && p.synced))
  })
  /** After the sync exchange the kept edits are on their way; once the socket has written them out they count as sent. */
  let sentCheck: ReturnType<typeof setTimeout> | null = null
  const checkSent = () => {
    sentCheck = null
    if (disposed || !p.wsconnected || !p.synced || pending.value.count === 0) return
    if ((p.ws?.bufferedAmount ?? 0) > 0) sentCheck = setTimeout(checkSent, 100)
    else setPending(noteSent(pending.value, Date.now()))
  }
  p.on('sync', (state: boolean) => {
    if (state && !readonly && sentCheck === null) checkSent()
  })

  const updateUndoState = () => {
    canUndo.value = undoManager.undoStack.length > 0
    canRedo.value = undoManager.redoStack.length > 0
  }
  undoManager.on('stack-item-added', updateUndoState)
  undoManager.on('stack-item-popped', updateUndoState)
  undoManager.on('stack-cleared', updateUndoState)

  const onOnline = () => {
    if (!closedReason.value) p.connect()
  }
  window.addEventListener('online', onOnline)

  onScopeDispose(() => {
    disposed = true
    reportWaitingEdits(sheetId, 0)
    if (sentCheck !== null) clearTimeout(sentCheck)
    localCopy?.close()
    window.removeEventListener('online', onOnline)
    awarenessProtocol.removeAwarenessStates(awareness, [doc.clientID], 'left the sheet')
    undoManager.destroy()
    p.destroy()
    awareness.destroy()
    doc.destroy()
  })

  // --- editing -------------------------------------------------------------------------------------------------

  /** Runs a change as this person's edit; refuses (returns false) for readers. */
  function transact(change: () => void): boolean {
    if (readonly) return false
    doc.transact(change, origin)
    return true
  }

  /**
   * A change to the list of cells (add, move, duplicate, delete, import) is one undo step of its own: without this,
   * edits within the undo manager's capture window (half a second) would merge, and undoing a delete made right
   * after a duplicate would undo both.
   */
  function transactStep(change: () => void): boolean {
    if (readonly) return false
    undoManager.stopCapturing()
    doc.transact(change, origin)
    undoManager.stopCapturing()
    return true
  }

  /** Where a cell (or a placeholder for an entry that is not one, `entry-<index>`) stands in the list. */
  function indexOf(id: string): number {
    return entryIndex(cells as unknown as Y.Array<unknown>, id)
  }

  function mapOf(id: string): CellMap | undefined {
    const i = indexOf(id)
    const entry: unknown = i < 0 ? undefined : cells.get(i)
    return entry instanceof Y.Map ? (entry as CellMap) : undefined
  }

  /** Writes plain fields of a cell; `undefined` removes a field. Text fields go through setText. */
  function setFields(id: string, fields: Record<string, unknown>): boolean {
    const map = mapOf(id)
    if (!map) return false
    return transact(() => {
      for (const [key, value] of Object.entries(fields)) {
        if (key === 'id' || key === 'kind') continue
        const current = map.get(key)
        if (current instanceof Y.Text && typeof value === 'string') {
          current.delete(0, current.length)
          current.insert(0, value)
        } else if (value === undefined) map.delete(key)
        else map.set(key, value === null || typeof value !== 'object' ? value : JSON.parse(JSON.stringify(value)))
      }
    })
  }

  /** Inserts a new cell at `index` (end when omitted); returns its id. */
  function insertCell(cell: Cell, index = cells.length): string | null {
    const id = newCellId()
    const ok = transactStep(() => cells.insert(Math.max(0, Math.min(index, cells.length)), [cellToMap({ ...cell, id }, id)]))
    return ok ? id : null
  }

  /**
   * Inserts several new cells at `index` (end when omitted) as one undo step (e.g. the cells of an α extraction);
   * returns their ids in order.
   */
  function insertCells(next: Cell[], index = cells.length): string[] | null {
    const ids = next.map(() => newCellId())
    const ok = transactStep(() => cells.insert(Math.max(0, Math.min(index, cells.length)), next.map((c, i) => cellToMap({ ...c, id: ids[i] }, ids[i]))))
    return ok ? ids : null
  }

  /** Writes plain fields of a cell as an undo step of its own (a fit window set on the figure, a value taken over). */
  function setFieldsStep(id: string, fields: Record<string, unknown>): boolean {
    if (readonly) return false
    undoManager.stopCapturing()
    const ok = setFields(id, fields)
    undoManager.stopCapturing()
    return ok
  }

  function deleteCell(id: string): boolean {
    const i = indexOf(id)
    if (i < 0) return false
    return transactStep(() => cells.delete(i, 1))
  }

  /** Moves a cell to position `to` (clamped). The card is rebuilt, so its editors re-bind. */
  function moveCell(id: string, to: number): boolean {
    const from = indexOf(id)
    if (from < 0) return false
    const target = Math.max(0, Math.min(to, cells.length - 1))
    if (target === from) return false
    const map: unknown = cells.get(from)
    if (!(map instanceof Y.Map)) return false
    return transactStep(() => {
      const copy = copyMap(map as CellMap, id)
      cells.delete(from, 1)
      cells.insert(target, [copy])
    })
  }

  /** Duplicates a cell just below itself, with a new id and the given name; returns the new id. */
  function duplicateCell(id: string, name: string | undefined): string | null {
    const i = indexOf(id)
    if (i < 0) return null
    const newId = newCellId()
    const original: unknown = cells.get(i)
    if (!(original instanceof Y.Map)) return null
    const copy = copyMap(original as CellMap, newId)
    if (name !== undefined) copy.set('name', name)
    const ok = transactStep(() => cells.insert(i + 1, [copy]))
    return ok ? newId : null
  }

  /** Replaces every cell (import "replace"). */
  function replaceCells(next: SheetCell[]): boolean {
    return transactStep(() => {
      cells.delete(0, cells.length)
      cells.push(next.map((c) => cellToMap(c, c.id)))
    })
  }

  /** Appends cells at the end (import "append"); they must already have fresh ids. */
  function appendCells(next: SheetCell[]): boolean {
    return transactStep(() => cells.push(next.map((c) => cellToMap(c, c.id))))
  }

  /** The results kept with the copy in this browser at the last visit ([] when none). */
  async function readKeptResults(): Promise<CellResult[]> {
    return localCopy ? unpackKeptResults(await localCopy.readResults()) : []
  }

  /** Keeps the latest results with the copy in this browser, for the next opening. */
  function keepResults(results: Record<string, CellResult>): void {
    if (!disposed) localCopy?.writeResults(packKeptResults(results))
  }

  function undo(): void {
    if (!readonly) undoManager.undo()
  }

  function redo(): void {
    if (!readonly) undoManager.redo()
  }

  return {
    doc,
    cells,
    meta,
    awareness,
    undoManager,
    provider,
    readonly,
    keptOnDevice,
    pending,
    connection,
    synced,
    closedReason,
    accessLost,
    denied,
    canUndo,
    canRedo,
    origin,
    mapOf,
    indexOf,
    setFields,
    insertCell,
    insertCells,
    setFieldsStep,
    deleteCell,
    moveCell,
    duplicateCell,
    replaceCells,
    appendCells,
    undo,
    redo,
    transact,
    readKeptResults,
    keepResults,
  }
}

export type SheetDoc = ReturnType<typeof useSheetDoc>
