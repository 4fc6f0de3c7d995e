/** The signed-in person's labs and the lab they are working in (for the header's lab switcher). */
import { computed, ref } from 'vue'
import { defineStore } from 'pinia'
import * as labsApi from '@/api/labs'
import type { Lab } from '@/api/labs'

const LAST_LAB_KEY = 'penumbra.lastLab'

function readLastLab(): string | null {
  try {
    return localStorage.getItem(LAST_LAB_KEY)
  } catch {
    return null
  }
}

export const useLabsStore = defineStore('labs', () => {
  const labs = ref<Lab[]>([])
  const loaded = ref(false)
  const loading = ref(false)
  const error = ref('')
  const currentLabId = ref<string | null>(readLastLab())

  const current = computed(() => labs.value.find((l) => l.id === currentLabId.value) ?? null)

  async function fetchLabs(): Promise<void> {
    loading.value = true
    error.value = ''
    try {
      labs.value = await labsApi.listLabs()
      loaded.value = true
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
      throw err
    } finally {
      loading.value = false
    }
  }

  /** Loads the list unless it is already here. */
  async function ensureLoaded(): Promise<void> {
    if (!loaded.value && !loading.value) await fetchLabs()
  }

  async function create(name: string): Promise<Lab> {
    const lab = await labsApi.createLab(name)
    upsert(lab)
    return lab
  }

  /** Puts a fresher copy of one lab into the list (after opening, renaming or joining it). */
  function upsert(lab: Lab): void {
    const i = labs.value.findIndex((l) => l.id === lab.id)
    if (i >= 0) labs.value[i] = lab
    else labs.value = [...labs.value, lab].sort((a, b) => a.name.localeCompare(b.name))
  }

  /** Drops a lab from the list (after leaving it or losing access). */
  function forget(labId: string): void {
    labs.value = labs.value.filter((l) => l.id !== labId)
    if (currentLabId.value === labId) setCurrent(null)
  }

  function setCurrent(labId: string | null): void {
    currentLabId.value = labId
    try {
      if (labId) localStorage.setItem(LAST_LAB_KEY, labId)
      else localStorage.removeItem(LAST_LAB_KEY)
    } catch {
      // private mode: the switcher simply forgets across reloads
    }
  }

  /** Clears everything (on sign-out, so the next person starts clean). */
  function reset(): void {
    labs.value = []
    loaded.value = false
    error.value = ''
    setCurrent(null)
  }

  return { labs, loaded, loading, error, currentLabId, current, fetchLabs, ensureLoaded, create, upsert, forget, setCurrent, reset }
})
