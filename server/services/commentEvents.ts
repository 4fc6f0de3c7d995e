/**
 * The live channel for comments: listeners per sheet (the server-sent event streams of
 * GET /api/sheets/:sheetId/comments/events). In one process this is a map of callbacks; with several app instances
 * (DESIGN §10) the collaboration server relays each comment over its bus (Redis), and the other instances deliver it
 * to their own listeners.
 */
import type { Comment } from '../../shared/schema/api'

type Listener = (comment: Comment) => void
const listeners = new Map<string, Set<Listener>>()

export function subscribeComments(sheetId: string, listener: Listener): () => void {
  let set = listeners.get(sheetId)
  if (!set) listeners.set(sheetId, (set = new Set()))
  set.add(listener)
  return () => {
    set.delete(listener)
    if (set.size === 0 && listeners.get(sheetId) === set) listeners.delete(sheetId)
  }
}

type Relay = (sheetId: string, comment: Comment) => void
const relays = new Set<Relay>()

/**
 * Sends every comment published here on to other app instances as well (the collaboration server's bus, when it
 * reaches other processes). Returns the function that stops it.
 */
export function relayComments(relay: Relay): () => void {
  relays.add(relay)
  return () => relays.delete(relay)
}

/** A comment was created or changed here: this process's listeners hear it, and other instances through the relays. */
export function publishComment(sheetId: string, comment: Comment): void {
  deliverComment(sheetId, comment)
  for (const relay of relays) {
    try {
      relay(sheetId, comment)
    } catch (err) {
      console.warn(`a comment could not be passed to the other instances: ${err instanceof Error ? err.message : String(err)}`)
    }
  }
}

/** A comment published on another instance: only this process's listeners hear it. */
export function deliverComment(sheetId: string, comment: Comment): void {
  for (const listener of [...(listeners.get(sheetId) ?? [])]) {
    try {
      listener(comment)
    } catch (err) {
      console.warn(`a comment listener failed: ${err instanceof Error ? err.message : String(err)}`)
    }
  }
}
