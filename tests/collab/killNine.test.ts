// kill -9: a server that relayed an update has it on disk. A child-process server is SIGKILLed mid-stream and
// restarted on the same database; every update the observer received is there (bench/soak-kill.ts runs 20 trials).
import { describe, expect, it } from 'vitest'
import { ON_POSTGRES, sqliteOnly } from '../utils/db'
import { killTrial } from './support/killTrial'

// The trials kill child collaboration servers that hold a SQLite file (COLLAB_DB).
describe.skipIf(ON_POSTGRES)(sqliteOnly('collab: SIGKILL during a stream of updates'), () => {
  it.each([1, 2, 3])('killTrial() %i: every relayed update survives the kill and the writer catches up after restart', async () => {
    const r = await killTrial({ typed: 400, killAfter: 150 })
    expect(r.relayed).toBeGreaterThanOrEqual(150)
    expect(r.lostRelayed).toBe(0)
    expect(r.storedAfterRestart).toBeGreaterThanOrEqual(r.relayed)
    expect(r.convergedAfterReconnect).toBe(true)
  }, 60_000)

  it.each([
    ['compacting every 25 rows', { compactEvery: 25 }],
    ['with a viewer observing', { observer: 'viewer' as const }],
  ])('killTrial() %s: every relayed update survives the kill', async (_label, extra) => {
    const r = await killTrial({ typed: 400, killAfter: 150, ...extra })
    expect(r.relayed).toBeGreaterThanOrEqual(150)
    expect(r.lostRelayed).toBe(0)
    expect(r.storedAfterRestart).toBeGreaterThanOrEqual(r.relayed)
    expect(r.convergedAfterReconnect).toBe(true)
  }, 60_000)
})
