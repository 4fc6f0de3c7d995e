/**
 * The fan-out seam between app instances (DESIGN §10). Every update a registry accepts is published here after it is
 * stored, and every control event (membership change, deleted sheet) too; a registry applies what other instances
 * publish to its own copy of the document and its own connections. One process uses `createLocalBus()` (publishes
 * to nobody); several processes would use a Redis-streams bus with this same interface.
 */

export type BusEvent =
  | { type: 'update'; sheetId: string; update: Uint8Array; seq: number }
  | { type: 'awareness'; sheetId: string; update: Uint8Array }
  | { type: 'membership'; labId: string; userId: string }
  | { type: 'sheet-deleted'; sheetId: string }
  /** Some of a person's sessions ended (sign-out, password change or reset): every instance checks their sockets now. */
  | { type: 'sessions'; userId: string }

export interface CollabBus {
  /** Sends an event to every other instance (never back to the publisher). */
  publish(instanceId: string, event: BusEvent): void
  /** Receives other instances' events; returns the unsubscribe function. */
  subscribe(instanceId: string, listener: (event: BusEvent) => void): () => void
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
