/**
 * Counting the edits kept on this device that have not reached the server yet, and the plain words the connection
 * badge uses for them. Pure functions, so the rules are tested without a browser.
 *
 * An "edit" is one burst of changes: changes less than EDIT_GROUP_MS apart (typing a word, dragging a slider) count
 * as one. Only changes made while the page is not live count: a change made while connected and in sync is sent at
 * once. When the connection is back and the sync exchange is done, every kept edit has been sent.
 */

/** Changes closer together than this (ms) are one edit. */
export const EDIT_GROUP_MS = 1500

export interface PendingEdits {
  /** Edits made on this device that have not been sent to the server yet. */
  count: number
  /** When the last counted change was made (ms since 1970), for grouping; null when none. */
  lastChangeAt: number | null
  /** The last batch of kept edits that went out: how many and when. */
  sent: { count: number; at: number } | null
}

export const NO_PENDING_EDITS: PendingEdits = { count: 0, lastChangeAt: null, sent: null }

/** Starts from a count stored with the local copy (anything odd counts as none). */
export function restoredPending(stored: unknown): PendingEdits {
  const count = typeof stored === 'number' && Number.isInteger(stored) && stored > 0 ? stored : 0
  return { count, lastChangeAt: null, sent: null }
}

/**
 * A local change at `now`. `live` says the page was connected and in sync, so the change went out at once and is not
 * kept. A change within EDIT_GROUP_MS of the previous kept one joins that edit.
 */
export function noteChange(state: PendingEdits, now: number, live: boolean): PendingEdits {
  if (live) return state.lastChangeAt === null ? state : { ...state, lastChangeAt: null }
  const joins = state.count > 0 && state.lastChangeAt !== null && now - state.lastChangeAt < EDIT_GROUP_MS
  return { ...state, count: joins ? state.count : state.count + 1, lastChangeAt: now }
}

/** The sync exchange after reconnecting is done: every kept edit went out at `now`. */
export function noteSent(state: PendingEdits, now: number): PendingEdits {
  if (state.count === 0) return state
  return { count: 0, lastChangeAt: null, sent: { count: state.count, at: now } }
}

function edits(n: number): string {
  return n === 1 ? '1 edit' : `${n} edits`
}

/** A clock time for the badge, e.g. `14:05`. */
export function clockTime(ms: number): string {
  const d = new Date(ms)
  return `${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`
}

export type BadgeTone = 'on' | 'wait' | 'off'

export interface BadgeInput {
  connection: 'connecting' | 'online' | 'offline'
  synced: boolean
  readonly: boolean
  /** A plain sentence when the server closed the connection for good, else ''. */
  closed: string
  /** True when the sheet is stored in this browser (IndexedDB works here). */
  kept: boolean
  pending: PendingEdits
  /** The current time (ms since 1970), to say "sent" on the line for SENT_NOTE_MS after a batch went out. */
  now: number
}

/** How long the badge line says that kept edits were sent (the tooltip keeps saying it). */
export const SENT_NOTE_MS = 30_000

/**
 * The badge's short line and its longer explanation. Examples (editor): offline with 3 kept edits →
 * `Offline · 3 edits waiting on this device`; back online → `Live · 3 edits sent`.
 */
export function badgeWords(input: BadgeInput): { tone: BadgeTone; text: string; tip: string } {
  const { pending, readonly, kept } = input
  const waiting = readonly ? 0 : pending.count
  const where = kept ? 'stored in this browser, so they survive a reload or a closed tab' : 'held in this tab only (this browser does not let the page store them), so keep the tab open'
  const waitingTip = waiting > 0 ? ` ${waiting === 1 ? 'One edit is' : `${edits(waiting)} are`} waiting on this device: ${where}; they are sent when the server is back.` : ''
  if (input.closed) {
    const tip = waiting > 0 ? `${input.closed} ${waiting === 1 ? 'One edit is' : `${edits(waiting)} are`} still waiting on this device.` : input.closed
    return { tone: 'off', text: 'Disconnected', tip }
  }
  if (input.connection === 'online' && input.synced) {
    const sent = readonly ? null : pending.sent
    if (sent && input.now - sent.at < SENT_NOTE_MS)
      return { tone: 'on', text: `Live · ${edits(sent.count)} sent`, tip: `The ${edits(sent.count)} kept on this device went to the server at ${clockTime(sent.at)}. New edits are shared as you type.` }
    const sentTip = sent ? ` The ${edits(sent.count)} kept on this device went to the server at ${clockTime(sent.at)}.` : ''
    return { tone: 'on', text: 'Live', tip: readonly ? 'You see every change as it is made.' : `Your edits are saved and shared as you type.${sentTip}` }
  }
  if (input.connection === 'online') return { tone: 'wait', text: waiting > 0 ? `Sending ${edits(waiting)}…` : 'Loading…', tip: `Receiving the sheet from the server.${waitingTip}` }
  if (input.connection === 'connecting')
    return { tone: 'wait', text: waiting > 0 ? `Connecting… · ${edits(waiting)} waiting` : 'Connecting…', tip: `Reaching the server.${waitingTip}` }
  if (readonly)
    return {
      tone: 'off',
      text: 'Offline',
      tip: `The server cannot be reached; the sheet shows the last state received${kept ? ' (also kept in this browser)' : ''} and updates again when it is back.`,
    }
  if (waiting > 0) return { tone: 'off', text: `Offline · ${edits(waiting)} waiting on this device`, tip: `The server cannot be reached.${waitingTip} Keep working.` }
  return {
    tone: 'off',
    text: 'Offline',
    tip: `The server cannot be reached. Keep working: your edits are ${where}, and they are sent when the server is back.`,
  }
}
