/**
 * Between a card and its description field: whether the card has one, and whether the editor asked to write one.
 * An empty description takes no room on the card; the card's header offers "add a description" instead, so nothing
 * on the card moves under the pointer when someone clicks one of its fields (a field that appeared on focus pushed
 * the control being clicked away between the press and the release, and the click was lost).
 */
import type { InjectionKey, Ref } from 'vue'

export interface Describing {
  /** A description field is on this card (set by the field itself). */
  present: Ref<boolean>
  /** The editor asked to write a description: the empty field shows and takes the caret. */
  requested: Ref<boolean>
}

export const DESCRIBING: InjectionKey<Describing> = Symbol('describing')

let pointerDown = false
if (typeof window !== 'undefined') {
  window.addEventListener('pointerdown', () => (pointerDown = true), true)
  window.addEventListener('pointerup', () => (pointerDown = false), true)
  window.addEventListener('pointercancel', () => (pointerDown = false), true)
}

/**
 * Runs `fn` once a press in progress is released (at once when none is), so a layout change made on leaving a field
 * happens after the click that left it has landed.
 */
export function afterPress(fn: () => void): void {
  if (!pointerDown) {
    fn()
    return
  }
  window.addEventListener('pointerup', () => setTimeout(fn, 0), { once: true, capture: true })
}
