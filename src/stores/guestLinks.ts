/** The guest links of one snapshot: make, list (views, last view), revoke. */
import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as linksApi from '@/api/guestLinks'
import type { GuestLink } from '@/api/guestLinks'

export const useGuestLinksStore = defineStore('guestLinks', () => {
  const snapshotId = ref('')
  const links = shallowRef<GuestLink[]>([])
  const error = ref('')
  /** The full address of each link made on this page (shown once: the server keeps only a hash of the token). */
  const fresh = ref<Record<string, string>>({})

  async function load(id: string): Promise<void> {
    if (snapshotId.value !== id) links.value = []
    snapshotId.value = id
    error.value = ''
    try {
      const list = await linksApi.listGuestLinks(id)
      if (snapshotId.value === id) links.value = list
    } catch (err) {
      error.value = err instanceof Error ? err.message : String(err)
    }
  }

  async function make(id: string, expiresInDays: number, note: string): Promise<void> {
    const { url, ...link } = await linksApi.makeGuestLink(id, expiresInDays, note)
    fresh.value = { ...fresh.value, [link.id]: new URL(url, window.location.origin).href }
    links.value = [link, ...links.value.filter((l) => l.id !== link.id)]
    await load(id)
  }

  async function revoke(linkId: string): Promise<void> {
    await linksApi.revokeGuestLink(linkId)
    if (snapshotId.value) await load(snapshotId.value)
  }

  return { snapshotId, links, error, fresh, load, make, revoke }
})
