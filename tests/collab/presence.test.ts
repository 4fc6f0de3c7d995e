// Presence through the stock client's life: it appears for the others, goes when the connection drops, and comes
// back as soon as the client reconnects (not only after its next periodic renewal).
import { describe, expect, it } from 'vitest'
import { until } from './support/fixture'
import { useCollab } from './support/useCollab'

describe('collab: presence across a reconnect', () => {
  const t = useCollab()

  it.each([
    ['editor', 'Tomás Reyes'],
    ['viewer', 'Lena Fischer'],
  ] as const)('shows a reconnected %s’s presence to the others at once, with the signed-in name', async (person, name) => {
    const a = t.connect(person)
    const b = t.connect('editor2')
    a.provider.awareness.setLocalStateField('cell', 'cx')
    await Promise.all([a.synced(), b.synced()])
    const id = a.doc.clientID
    await until(() => b.provider.awareness.getStates().get(id)?.cell === 'cx', 'a’s presence at b')
    // The link drops (the client closes its socket, as on a network change); the provider reconnects by itself.
    a.provider.ws?.close()
    await until(() => !b.provider.awareness.getStates().has(id), 'a’s presence to go when its connection closed')
    await until(() => a.provider.wsconnected && a.provider.synced, 'a to reconnect')
    await until(() => b.provider.awareness.getStates().get(id)?.cell === 'cx', 'a’s presence back at b', 3000)
    expect(b.provider.awareness.getStates().get(id)).toMatchObject({ cell: 'cx', user: { name } })
    // Its later changes keep arriving.
    a.provider.awareness.setLocalStateField('cell', 'cd')
    await until(() => b.provider.awareness.getStates().get(id)?.cell === 'cd', 'a’s next presence change at b', 3000)
  })
})
