/** Whether the screen is narrow (a phone held upright), as a ref that follows resizes. */
import { onScopeDispose, ref, type Ref } from 'vue'

export const NARROW_QUERY = '(max-width: 700px)'

export function useNarrow(query = NARROW_QUERY): Ref<boolean> {
  const narrow = ref(false)
  if (typeof window === 'undefined' || !window.matchMedia) return narrow
  const media = window.matchMedia(query)
  narrow.value = media.matches
  const onChange = (e: MediaQueryListEvent) => {
    narrow.value = e.matches
  }
  media.addEventListener('change', onChange)
  onScopeDispose(() => media.removeEventListener('change', onChange))
  return narrow
}
