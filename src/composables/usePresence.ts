/**
 * Who is on the sheet and which cell each person is in, through Yjs awareness. Each person announces
 * `{ user: { id, name, color, colorLight }, cell }`; the formula editors add their own `cursor` field (y-codemirror.next
 * reads `user.name` and `user.color` for remote carets). One person with two tabs shows once.
 */
import { computed, onScopeDispose, shallowRef } from 'vue'
import type { Awareness } from 'y-protocols/awareness'

export interface PresenceUser {
  id: string
  name: string
}

export interface Person {
  userId: string
  name: string
  color: string
  /** Cells this person is in (one per open tab at most). */
  cells: string[]
  self: boolean
}

/** Caret colours: distinct on the paper background and from the accent, dark enough for white initials. */
const PALETTE = ['#2f6db5', '#2d7f66', '#8a4fb8', '#b13f74', '#2f7f98', '#6b7a22', '#b4532a', '#5058c0']

/** A stable colour for a user id (the same person has the same colour on every screen). */
export function colourFor(userId: string): string {
  let h = 2166136261
  for (let i = 0; i < userId.length; i++) {
    h ^= userId.charCodeAt(i)
    h = Math.imul(h, 16777619)
  }
  return PALETTE[(h >>> 0) % PALETTE.length]
}

/** "Tomás Reyes" → "TR". */
export function initials(name: string): string {
  const parts = name.trim().split(/\s+/).filter(Boolean)
  if (parts.length === 0) return '?'
  const first = parts[0][0] ?? ''
  const last = parts.length > 1 ? (parts[parts.length - 1][0] ?? '') : ''
  return (first + last).toUpperCase()
}

interface AwarenessState {
  user?: { id?: string; name?: string; color?: string }
  cell?: string | null
}

export function usePresence(awareness: Awareness, user: PresenceUser) {
  const color = colourFor(user.id)
  awareness.setLocalState({ user: { id: user.id, name: user.name, color, colorLight: `${color}33` }, cell: null })

  const people = shallowRef<Person[]>([])

  const refresh = () => {
    const byUser = new Map<string, Person>()
    awareness.getStates().forEach((raw, clientId) => {
      const state = raw as AwarenessState
      const id = state.user?.id
      if (!id) return
      const self = clientId === awareness.clientID || id === user.id
      let person = byUser.get(id)
      if (!person) {
        person = { userId: id, name: state.user?.name || 'Someone', color: state.user?.color || colourFor(id), cells: [], self }
        byUser.set(id, person)
      }
      if (state.cell && !person.cells.includes(state.cell)) person.cells.push(state.cell)
    })
    people.value = [...byUser.values()].sort((a, b) => (a.self === b.self ? a.name.localeCompare(b.name) : a.self ? -1 : 1))
  }
  awareness.on('change', refresh)
  refresh()

  /** The other people in each cell, by cell id. */
  const othersByCell = computed(() => {
    const map: Record<string, Person[]> = {}
    for (const person of people.value) {
      if (person.self) continue
      for (const cell of person.cells) (map[cell] ??= []).push(person)
    }
    return map
  })

  /** Announces the cell this person is working in (null when none). */
  function enterCell(cellId: string | null): void {
    const current = (awareness.getLocalState() as AwarenessState | null)?.cell ?? null
    if (current !== cellId) awareness.setLocalStateField('cell', cellId)
  }

  onScopeDispose(() => {
    awareness.off('change', refresh)
  })

  return { people, othersByCell, enterCell, color }
}

export type Presence = ReturnType<typeof usePresence>
