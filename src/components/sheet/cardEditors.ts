/**
 * Cards whose editor is a panel that opens (a note's text, a figure's settings) register how to open it, by cell id.
 * The sheet page opens a card's editor through this one registry — for a new cell, F2, or the card's Edit action —
 * so no caller needs to know which button a card kind draws. Cards whose fields are always shown register nothing.
 */
import { onBeforeUnmount, onMounted } from 'vue'
import { useSheetContext } from './sheetContext'

export type OpenEditor = () => void | Promise<void>

export interface CardEditors {
  /** Registers a card's opener; the returned function removes it (only if it is still the one registered). */
  register: (cellId: string, open: OpenEditor) => () => void
  /** Opens the cell's editor panel; false when its card has none (or is not built). */
  open: (cellId: string) => Promise<boolean>
}

export function createCardEditors(): CardEditors {
  const openers = new Map<string, OpenEditor>()
  return {
    register(cellId, open) {
      openers.set(cellId, open)
      return () => {
        if (openers.get(cellId) === open) openers.delete(cellId)
      }
    },
    async open(cellId) {
      const open = openers.get(cellId)
      if (!open) return false
      await open()
      return true
    },
  }
}

/** Registers this card's editor opener with the sheet page for as long as the card is mounted. */
export function useCardEditor(cellId: () => string, open: OpenEditor): void {
  const ctx = useSheetContext()
  let remove: (() => void) | null = null
  onMounted(() => {
    remove = ctx.editors.register(cellId(), open)
  })
  onBeforeUnmount(() => remove?.())
}
