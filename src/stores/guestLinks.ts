/** The guest links of one snapshot: make, list (views, last view), revoke. */
import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import * as linksApi from '@/api/guestLinks'
import type { GuestLinkRow } from '@/api/guestLinks'

export const useGuestLinksStore = defineStore('guestLinks', () => {
  const snapshotId = ref('')
  const links = shallowRef<GuestLinkRow[]>([])
  const error = ref('')
  /** The full address of a link made on this page (the server shows it once; only its hash is stored). */
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

  async function make(id: string, expiresInDays: number, note: string): Promise<GuestLinkRow> {
    const link = await linksApi.makeGuestLink(id, expiresInDays, note)
    if (link.url) fresh.value = { ...fresh.value, [link.id]: new URL(link.url, window.location.origin).href }
    await load(id)
    if (!links.value.some((l) => l.id === link.id)) links.value = [link, ...links.value]
    return link
  }

  async function revoke(linkId: string): Promise<void> {
    await linksApi.revokeGuestLink(linkId)
    links.value = links.value.map((l) => (l.id === linkId ? { ...l, revokedAt: Date.now() } : l))
    if (snapshotId.value) void load(snapshotId.value)
  }

  return { snapshotId, links, error, fresh, load, make, revoke }
})
