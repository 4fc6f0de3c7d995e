/**
 * The copy of a sheet kept in this browser (IndexedDB through y-indexeddb), so edits made while the server is away
 * survive a reload or a closed tab and go out when it is back. Clearing rules live in localCopyStore.ts (sign-out,
 * sign-in) and localCopyNames.ts (names, the 30-day rule).
 *
 * For readers (reviewer, viewer) the copy is a cache of what the server sent. A copy last written by an editor's page
 * (the same person before their role changed) may hold edits the server never accepted, so a reader's page deletes
 * such a copy instead of showing it.
 */
import type * as Y from 'yjs'
import { IndexeddbPersistence } from 'y-indexeddb'
import * as idb from 'lib0/indexeddb'
import { localCopyName } from './localCopyNames'
import { afterHousekeeping, deleteCopy, deleteDatabase, forgetSheetAnswer, markUsed } from './localCopyStore'

export { keepPageForOffline } from './localCopyStore'

/** Which kind of page last wrote a copy: an editor's (may hold unsent edits) or a reader's (server state only). */
export type LocalCopyMode = 'edit' | 'read'

const STORES: [string, IDBObjectStoreParameters?][] = [['updates', { autoIncrement: true }], ['custom']]
/** The key of the last results in the copy's `custom` store (cleared with the copy: sign-out, expiry, lost access). */
const RESULTS_KEY = 'results'

/** Reads the marks of a copy (which page wrote it, how many edits wait) without loading its document. */
async function readMarks(name: string): Promise<{ mode: unknown; pending: unknown }> {
  const db = await idb.openDB(name, (d) => idb.createStores(d, STORES))
  try {
    const [custom] = idb.transact(db, ['custom'], 'readonly')
    const mode = await idb.get(custom!, 'mode')
    const pending = await idb.get(custom!, 'pending')
    return { mode, pending }
  } finally {
    db.close()
  }
}

export interface LocalCopy {
  /** The database name. */
  name: string
  /** Resolves once the stored copy is in the document (or could not be read); `available` says which. */
  ready: Promise<{ available: boolean; pending: unknown }>
  /** The origin of updates applied from the stored copy (so callers can tell them from this person's edits). */
  origin(): unknown
  /** Stores how many edits wait on this device. */
  setPending(count: number): void
  /** Deletes this copy and the sheet's remembered metadata (the sheet was deleted or access ended); nothing more is stored. */
  clear(): Promise<void>
  /** Stops storing (page left); the copy stays. */
  close(): void
  /** Called when the copy stops being stored while the page is open (deleted by sign-out in another tab). */
  onGone(listener: () => void): void
  /** The results last kept with this copy (see keptResults.ts), or null when there are none or they do not read. */
  readResults(): Promise<unknown>
  /** Keeps the latest results beside the document, replacing the earlier ones. */
  writeResults(value: unknown): void
}

/**
 * Opens the copy of `sheetId` for `userId` and loads it into `doc`. Readers' pages delete a copy an editor's page
 * wrote before loading. The copy is marked as used now (for the 30-day rule).
 */
export function openLocalCopy(doc: Y.Doc, userId: string, sheetId: string, mode: LocalCopyMode): LocalCopy {
  const name = localCopyName(userId, sheetId)
  let persistence: IndexeddbPersistence | null = null
  let closed = false
  let gone: (() => void) | null = null
  let pendingToStore: number | null = null

  markUsed(name)

  const stop = () => {
    const p = persistence
    persistence = null
    if (p) void p.destroy().catch(() => undefined)
  }

  const ready = (async () => {
    if (typeof indexedDB === 'undefined') return { available: false, pending: 0 }
    try {
      await afterHousekeeping()
      if (closed) return { available: false, pending: 0 }
      const marks = await readMarks(name)
      if (mode === 'read' && marks.mode !== 'read') await deleteDatabase(name)
      if (closed) return { available: false, pending: 0 }
      const p = new IndexeddbPersistence(name, doc)
      persistence = p
      await p.whenSynced
      if (closed || persistence !== p) return { available: false, pending: 0 }
      // another tab deleting this database (sign-out) closes it here: stop storing instead of failing on each edit
      if (p.db)
        p.db.onversionchange = () => {
          p.db?.close()
          if (persistence === p) {
            stop()
            gone?.()
          }
        }
      await p.set('mode', mode)
      if (pendingToStore !== null) await p.set('pending', pendingToStore)
      return { available: true, pending: mode === 'edit' ? marks.pending : 0 }
    } catch (err) {
      console.warn('Penumbra could not open the copy of this sheet kept in the browser:', err)
      stop()
      return { available: false, pending: 0 }
    }
  })()

  return {
    name,
    ready,
    origin: () => persistence,
    setPending(count) {
      pendingToStore = count
      const p = persistence
      if (p?.synced) void p.set('pending', count).catch(() => undefined)
    },
    async clear() {
      closed = true
      const p = persistence
      persistence = null
      if (p) await p.destroy().catch(() => undefined)
      await deleteCopy(name)
      await forgetSheetAnswer(sheetId)
    },
    close() {
      closed = true
      stop()
    },
    onGone(listener) {
      gone = listener
    },
    async readResults() {
      const { available } = await ready
      const p = persistence
      if (!available || !p) return null
      return p.get(RESULTS_KEY).catch(() => null)
    },
    writeResults(value) {
      const p = persistence
      if (p?.synced && !closed) void p.set(RESULTS_KEY, value as string).catch(() => undefined)
    },
  }
}

