// Presence through the stock client's life: it appears for the others, goes when the connection drops, and comes
// back as soon as the client reconnects (not only after its next periodic renewal).
import { describe, expect, it } from 'vitest'
import { until, type RawClient } from './support/fixture'
import { awarenessFrame } from './support/frames'
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

describe('collab: presence in a crowded sheet', () => {
  const t = useCollab()

  it('keeps a newcomer connected when its stock client echoes the presence of 80 people back in one message', async () => {
    const crowd: RawClient[] = []
    for (let i = 0; i < 80; i++) crowd.push(await t.raw(i % 2 ? 'viewer' : 'reviewer'))
    crowd.forEach((r, i) => r.ws.send(awarenessFrame([{ clientId: 10_000 + i, clock: 1, state: { cell: 'cx' } }])))
    await until(() => crowd.every((r) => r.frames.length > 0), 'the crowd presence')
    await until(() => t.server.collab.stats().connections === 80, 'the crowd to be connected')
    const a = t.connect('editor')
    await a.synced()
    await until(() => a.provider.awareness.getStates().size >= 81, 'everyone’s presence at the newcomer')
    // The stock client sends every presence it learns back to the server; give that echo time to arrive.
    await new Promise((r) => setTimeout(r, 100))
    a.provider.awareness.setLocalStateField('cell', 'cd')
    const probe = t.connect('owner')
    await probe.synced()
    await until(() => probe.provider.awareness.getStates().get(a.doc.clientID)?.cell === 'cd', 'the newcomer’s presence at another client')
    expect(a.closes).toEqual([])
    expect(a.provider.wsconnected).toBe(true)
    expect(t.server.collab.stats().counters.malformedFrames).toBe(0)
  })
})

describe('collab: presence fields other clients put in style attributes and labels', () => {
  const t = useCollab()

  const bad: [string, Record<string, unknown>][] = [
    ['a colour that is not a hex colour', { user: { color: 'red; background: url(https://example.invalid/x)' }, cell: null }],
    ['a light colour that is not a hex colour', { user: { color: '#123456', colorLight: 'expression(alert(1))' }, cell: null }],
    ['a name with markup', { user: { name: '<img src=x onerror=alert(1)>' }, cell: null }],
    ['a name far too long', { user: { name: 'n'.repeat(200) }, cell: null }],
    ['a user that is a string', { user: 'me', cell: null }],
    ['a cell that is an object', { user: { color: '#123456' }, cell: { id: 'cx' } }],
  ]

  it.each(bad)('drops presence with %s (counted, never relayed); the connection stays', async (_what, state) => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    editor.ws.send(awarenessFrame([{ clientId: 4242, clock: 1, state }]))
    // a valid presence from a second connection, sent after: once it has arrived, the first would have too
    const other = await t.raw('owner')
    other.ws.send(awarenessFrame([{ clientId: 4343, clock: 1, state: { user: { color: '#1f6feb', colorLight: '#1f6feb33' }, cell: 'cx' } }]))
    await until(() => watcher.provider.awareness.getStates().get(4343)?.cell === 'cx', 'the valid presence at the watcher')
    expect(watcher.provider.awareness.getStates().has(4242)).toBe(false)
    expect(t.server.collab.stats().counters.awarenessRefused).toBe(1)
    expect(editor.isOpen()).toBe(true)
  })

  it('relays a valid presence with the signed-in name in place of the claimed one', async () => {
    const watcher = t.connect('editor2')
    await watcher.synced()
    const editor = await t.raw('editor')
    editor.ws.send(awarenessFrame([{ clientId: 4444, clock: 1, state: { user: { name: 'Somebody Else', color: '#abc' }, cell: 'cEg' } }]))
    await until(() => watcher.provider.awareness.getStates().has(4444), 'the presence at the watcher')
    expect(watcher.provider.awareness.getStates().get(4444)).toMatchObject({ user: { name: 'Tomás Reyes', color: '#abc' }, cell: 'cEg' })
  })
})
