/**
 * The sheet page's keyboard scheme, in one place: which key does what, where it works, and the words the shortcuts
 * panel and the help page show for it. The sheet (SheetLive.vue) asks `sheetActionFor` what a key press means; the
 * panel and the help page list `SHORTCUTS`, so the documentation cannot drift from the handling.
 *
 * The scheme follows editor conventions people already have: a command palette (Ctrl+K / ⌘K) to add or find a cell
 * by typing, Alt+arrows to step between cells (with Shift: carry the cell), Ctrl+D / ⌘D to duplicate, F2 to edit in
 * place and F2 again to return to the card, Delete on a card, and the usual undo and redo.
 */

export type SheetAction =
  | 'palette'
  | 'previous'
  | 'next'
  | 'first'
  | 'last'
  | 'moveUp'
  | 'moveDown'
  | 'duplicate'
  | 'remove'
  | 'edit'
  | 'leave'
  | 'undo'
  | 'redo'
  | 'help'

/** Where the key was pressed: on a card itself, in a field of a card, in a formula or note editor, or elsewhere. */
export type KeyPlace = 'card' | 'field' | 'editor' | 'page'

export interface Shortcut {
  /** Key names as shown, for this platform's modifier ("Ctrl" or "⌘"). */
  keys: (mod: string) => string
  what: string
  /** Only for people who may edit the sheet. */
  edits: boolean
}

/** Ctrl, or ⌘ on Apple systems (the modifier the page answers to is either, on every system). */
export function modifierName(): string {
  return typeof navigator !== 'undefined' && /Mac|iPhone|iPad/.test(navigator.platform) ? '⌘' : 'Ctrl'
}

/** Every shortcut of the sheet page, in the order the shortcuts panel and the help page list them. */
export const SHORTCUTS: readonly Shortcut[] = [
  { keys: (m) => `${m}+K`, what: 'command palette: type to add a cell of any kind, find a cell by name, unit or formula, import or show this list', edits: false },
  { keys: () => 'Alt+↑ Alt+↓', what: 'previous or next cell (also from inside a field or formula)', edits: false },
  { keys: () => 'Home End', what: 'first or last cell, when a cell is selected', edits: false },
  { keys: () => 'F2', what: 'edit the selected cell (its formula, value or text); F2 again returns to the cell', edits: false },
  { keys: () => 'Tab', what: 'through the fields of a cell, then on to the next', edits: false },
  { keys: () => 'Alt+Shift+↑ Alt+Shift+↓', what: 'move the cell up or down', edits: true },
  { keys: (m) => `${m}+D`, what: 'duplicate the cell (the copy goes below it)', edits: true },
  { keys: () => 'Delete', what: 'delete the selected cell (undo brings it back)', edits: true },
  { keys: (m) => `${m}+Z`, what: 'undo your last change (only yours, not other people’s)', edits: true },
  { keys: (m) => `${m}+Shift+Z or ${m}+Y`, what: 'redo', edits: true },
  { keys: () => 'Ctrl+Space', what: 'in a formula: list cell names, functions and units', edits: true },
  { keys: () => 'Esc', what: 'in a formula or note editor: close the completion list, then leave the editor', edits: true },
  { keys: () => '?', what: 'show the keyboard shortcuts', edits: false },
]

/**
 * What a key press means on the sheet page, or null when it is not one of ours (it then does what it does anyway:
 * typing, the editor's own keys, the browser's). Ctrl and ⌘ are the same modifier here.
 */
export function sheetActionFor(event: Pick<KeyboardEvent, 'key' | 'ctrlKey' | 'metaKey' | 'altKey' | 'shiftKey'>, place: KeyPlace): SheetAction | null {
  const mod = event.ctrlKey || event.metaKey
  const key = event.key.length === 1 ? event.key.toLowerCase() : event.key
  if (mod && !event.altKey && !event.shiftKey && key === 'k') return 'palette'
  if (event.altKey && !mod && (key === 'ArrowUp' || key === 'ArrowDown')) {
    if (event.shiftKey) return place === 'page' ? null : key === 'ArrowUp' ? 'moveUp' : 'moveDown'
    return key === 'ArrowUp' ? 'previous' : 'next'
  }
  if (place !== 'page' && mod && !event.altKey && !event.shiftKey && key === 'd') return 'duplicate'
  if (key === 'F2' && !mod && !event.altKey && !event.shiftKey && place !== 'page') return place === 'card' ? 'edit' : 'leave'
  // the rest never reaches into a field or editor, where these keys type or edit text
  if (place === 'field' || place === 'editor') return null
  if (mod && !event.altKey) {
    if (key === 'z') return event.shiftKey ? 'redo' : 'undo'
    if (key === 'y' && !event.shiftKey) return 'redo'
    return null
  }
  if (event.altKey) return null
  if (key === '?') return 'help'
  if (place !== 'card') return null
  if (key === 'Home') return 'first'
  if (key === 'End') return 'last'
  if (key === 'Delete' || key === 'Backspace') return 'remove'
  return null
}
