/**
 * A text field's draft: what is typed stays local until the field commits it (Enter or leaving the field), follows
 * the document's value while the field is not being edited, and Escape goes back to that value. The number and text
 * fields of the cell cards share it.
 */
import { ref, watch } from 'vue'

export function useDraft<T>(value: () => T, show: (v: T) => string) {
  const draft = ref(show(value()))
  const problem = ref('')
  const editing = ref(false)
  watch(value, (v) => {
    if (!editing.value) {
      draft.value = show(v)
      problem.value = ''
    }
  })
  function revert(): void {
    editing.value = false
    draft.value = show(value())
    problem.value = ''
  }
  return { draft, problem, editing, revert }
}
