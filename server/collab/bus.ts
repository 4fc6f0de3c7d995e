/**
 * The fan-out seam between app instances (DESIGN §10). Every update a registry accepts is published here after it is
 * stored, and every control event (membership change, deleted sheet) too; a registry applies what other instances
 * publish to its own copy of the document and its own connections. One process uses `createLocalBus()` (publishes
 * to nobody); several processes use the Redis-streams bus (redisBus.ts) with this same interface.
 */
import type { Comment } from '../../shared/schema/api'

export type BusEvent =
  | { type: 'update'; sheetId: string; update: Uint8Array; seq: number }
  | { type: 'awareness'; sheetId: string; update: Uint8Array }
  /**
   * An instance that just read a sheet from the database tells the others how far its stored log reaches: one that
   * holds the sheet with less catches up. Rows stored by an instance killed before it published them are found so,
   * even when nobody edits the sheet again.
   */
  | { type: 'head'; sheetId: string; seq: number }
  | { type: 'membership'; labId: string; userId: string }
  | { type: 'sheet-deleted'; sheetId: string }
  /** A comment was created or changed on one instance: the others tell their live comment streams. */
  | { type: 'comment'; sheetId: string; comment: Comment }
  /** Some of a person's sessions ended (sign-out, password change or reset): every instance checks their sockets now. */
  | { type: 'sessions'; userId: string }

/** Events every instance hears, whichever sheets it holds (the control stream). */
export type ControlEvent = Extract<BusEvent, { type: 'membership' | 'sheet-deleted' | 'sessions' | 'comment' }>

export interface CollabBus {
  /** Sends an event to every other instance (never back to the publisher). */
  publish(instanceId: string, event: BusEvent): void
  /** Receives other instances' events; returns the unsubscribe function. */
  subscribe(instanceId: string, listener: (event: BusEvent) => void): () => void
  /**
   * The registry is about to load a sheet: deliver its events from now on. When this returns a Promise, the load
   * waits for it, so every event published after the database is read arrives (older ones are skipped by seq).
   */
  watch?(sheetId: string): void | Promise<void>
  /** The sheet left memory: its events are no longer needed here. */
  unwatch?(sheetId: string): void
  /** Publications and reads that failed so far (a bus that can fail: the network). */
  failures?(): number
  /** Stops reading and closes connections. */
  close?(): Promise<void>
}

/** A single instance: nobody else to tell. */
export function createLocalBus(): CollabBus {
  return { publish() {}, subscribe: () => () => {} }
}

/**
 * Several instances inside one process (tests of the seam): delivery is asynchronous, in publish order, like a
 * network bus.
 */
export function createMemoryBus(): CollabBus {
  const listeners = new Map<string, (event: BusEvent) => void>()
  return {
    publish(instanceId, event) {
      for (const [id, listener] of listeners) if (id !== instanceId) queueMicrotask(() => listener(event))
    },
    subscribe(instanceId, listener) {
      listeners.set(instanceId, listener)
      return () => listeners.delete(instanceId)
    },
  }
}
