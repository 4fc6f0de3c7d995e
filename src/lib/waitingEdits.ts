/**
 * Edits waiting on this device, per open sheet page of this tab: the account menu asks before signing out would
 * delete them (signing out clears every sheet kept in the browser).
 */
import { reactive } from 'vue'

const waiting = reactive(new Map<string, number>())

/** Records how many edits a sheet page holds that have not reached the server (0 forgets the sheet). */
export function reportWaitingEdits(sheetId: string, count: number): void {
  if (count > 0) waiting.set(sheetId, count)
  else waiting.delete(sheetId)
}

/** Edits waiting in every open sheet page of this tab. */
export function waitingEditsTotal(): number {
  let total = 0
  for (const n of waiting.values()) total += n
  return total
}

/** The question asked before signing out discards waiting edits, or null when nothing is waiting. */
export function signOutWarning(total: number): string | null {
  if (total <= 0) return null
  const edits = total === 1 ? '1 edit' : `${total} edits`
  return `${edits} made while the server could not be reached ${total === 1 ? 'has' : 'have'} not been sent yet. Signing out deletes ${total === 1 ? 'it' : 'them'} from this browser. Stay signed in and reconnect to send ${total === 1 ? 'it' : 'them'}, or sign out anyway.`
}
