/**
 * Checks that read before they write, sent at the same moment: a lab keeps at least one owner, and an invitation is
 * used once. On SQLite one writer at a time makes them safe; under DATABASE_URL (`npm run test:scale`) the requests
 * run on separate PostgreSQL connections, where only the locks in the services keep them apart.
 */
import { describe, expect, it } from 'vitest'
import { call, createTestUser, makeTestApp, seedLab, type SeededLab, type TestApp, type TestUser } from '../utils/server'
import { changeRole, removeMember } from '../../server/services/labs'
import { acceptInvitation } from '../../server/services/invitations'

/** A service call's outcome: 'ok', or the HTTP status its error carries. */
async function outcome(run: Promise<unknown>): Promise<number | 'ok'> {
  try {
    await run
    return 'ok'
  } catch (err) {
    const status = (err as { status?: number }).status
    if (!status) throw err
    return status
  }
}

const TRIALS = 8

/** The lab's owner and a second owner who joined by invitation. */
async function twoOwners(t: TestApp, lab: SeededLab): Promise<[TestUser, TestUser]> {
  const a = lab.users.owner
  const b = await createTestUser(t)
  await call(t, a.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: b.email, role: 'owner' })
  expect((await call(t, b.cookie).post(`/api/invitations/${t.mailer.tokenFor(b.email, '/invitations/')}/accept`, {})).status).toBe(200)
  return [a, b]
}

async function ownersOf(t: TestApp, lab: SeededLab): Promise<number> {
  const members = (await call(t, lab.users.viewer.cookie).get(`/api/labs/${lab.labId}/members`)).body.members as { role: string }[]
  return members.filter((m) => m.role === 'owner').length
}

describe('simultaneous requests', () => {
  it('two owners demoting each other at once: exactly one succeeds, the lab keeps one owner', async () => {
    const t = await makeTestApp()
    for (let trial = 0; trial < TRIALS; trial++) {
      const lab = await seedLab(t, `Race lab ${trial}`)
      const [a, b] = await twoOwners(t, lab)
      // both past the route's owner check, so the services meet: the second sees the last owner
      const answers = await Promise.all([outcome(changeRole(t.deps, lab.labId, b.id, 'editor')), outcome(changeRole(t.deps, lab.labId, a.id, 'editor'))])
      expect(answers.sort()).toEqual([409, 'ok'])
      expect(await ownersOf(t, lab)).toBe(1)
    }
  })

  it('two owners leaving at once: exactly one leaves, the other is refused', async () => {
    const t = await makeTestApp()
    for (let trial = 0; trial < TRIALS; trial++) {
      const lab = await seedLab(t, `Leave lab ${trial}`)
      const [a, b] = await twoOwners(t, lab)
      const answers = await Promise.all([outcome(removeMember(t.deps, lab.labId, a.id)), outcome(removeMember(t.deps, lab.labId, b.id))])
      expect(answers.sort()).toEqual([409, 'ok'])
      expect(await ownersOf(t, lab)).toBe(1)
    }
  })

  it('one invitation accepted twice at once: one membership, the second answer says why', async () => {
    const t = await makeTestApp()
    for (let trial = 0; trial < TRIALS; trial++) {
      const lab = await seedLab(t, `Accept lab ${trial}`)
      const guest = lab.users.outsider
      await call(t, lab.users.owner.cookie).post(`/api/labs/${lab.labId}/invitations`, { email: guest.email, role: 'editor' })
      const token = t.mailer.tokenFor(guest.email, '/invitations/')
      const answers = await Promise.all([outcome(acceptInvitation(t.deps, token, { user: guest })), outcome(acceptInvitation(t.deps, token, { user: guest }))])
      expect(answers.sort()[1]).toBe('ok')
      expect([409, 410]).toContain(answers[0])
      const members = (await call(t, lab.users.owner.cookie).get(`/api/labs/${lab.labId}/members`)).body.members as { email: string; role: string }[]
      expect(members.filter((m) => m.email === guest.email)).toEqual([expect.objectContaining({ role: 'editor' })])
    }
  })
})
