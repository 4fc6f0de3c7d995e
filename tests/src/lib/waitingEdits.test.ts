// The account menu's guard against signing out with edits that never reached the server.
import { afterEach, describe, expect, it } from 'vitest'
import { reportWaitingEdits, signOutWarning, waitingEditsTotal } from '../../../src/lib/waitingEdits'

describe('waiting edits', () => {
  afterEach(() => {
    reportWaitingEdits('s1', 0)
    reportWaitingEdits('s2', 0)
  })

  it('waitingEditsTotal() adds the open sheets and forgets a sheet reported at zero', () => {
    expect(waitingEditsTotal()).toBe(0)
    reportWaitingEdits('s1', 2)
    reportWaitingEdits('s2', 3)
    expect(waitingEditsTotal()).toBe(5)
    reportWaitingEdits('s1', 0)
    expect(waitingEditsTotal()).toBe(3)
    reportWaitingEdits('s2', 1)
    expect(waitingEditsTotal()).toBe(1)
  })

  it('signOutWarning() says nothing when no edit waits, and counts them in words otherwise', () => {
    expect(signOutWarning(0)).toBeNull()
    expect(signOutWarning(1)).toBe(
      '1 edit made while the server could not be reached has not been sent yet. Signing out deletes it from this browser. Stay signed in and reconnect to send it, or sign out anyway.',
    )
    expect(signOutWarning(4)).toBe(
      '4 edits made while the server could not be reached have not been sent yet. Signing out deletes them from this browser. Stay signed in and reconnect to send them, or sign out anyway.',
    )
  })
})
