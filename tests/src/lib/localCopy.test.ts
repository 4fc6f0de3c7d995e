/**
 * The rules of the sheet copies kept in a browser: database names per person and sheet, the register of last use,
 * the 30-day expiry at sign-in, what sign-out clears, counting the edits waiting on the device, and the badge words.
 */
import { describe, expect, it } from 'vitest'
import {
  LOCAL_COPY_MAX_AGE_MS,
  dropFromRegister,
  isPenumbraName,
  localCopyName,
  parseLocalCopyName,
  parseRegister,
  planExpiry,
  planSignOut,
  touchRegister,
} from '../../../src/lib/localCopyNames'
import {
  EDIT_GROUP_MS,
  NO_PENDING_EDITS,
  SENT_NOTE_MS,
  badgeWords,
  noteChange,
  noteSent,
  restoredPending,
  type BadgeInput,
} from '../../../src/lib/localCopyPending'

const DAY = 24 * 60 * 60 * 1000
const NOW = Date.UTC(2026, 11, 2, 1, 0, 0)

describe('localCopyName(userId, sheetId)', () => {
  it('localCopyName(user, sheet) names one database per person and sheet, under the Penumbra prefix', () => {
    expect(localCopyName('u1', 's9')).toBe('penumbra:sheet:u1:s9')
    expect(localCopyName('u1', 's9')).not.toBe(localCopyName('u2', 's9'))
    expect(localCopyName('u1', 's9')).not.toBe(localCopyName('u1', 's8'))
    expect(isPenumbraName(localCopyName('u1', 's9'))).toBe(true)
  })
  it('localCopyName(user, sheet) keeps pairs apart even when an id contains the separator', () => {
    expect(localCopyName('a:b', 'c')).not.toBe(localCopyName('a', 'b:c'))
    expect(parseLocalCopyName(localCopyName('a:b', 'c'))).toEqual({ userId: 'a:b', sheetId: 'c' })
    expect(parseLocalCopyName(localCopyName('a', 'b:c'))).toEqual({ userId: 'a', sheetId: 'b:c' })
  })
  it('localCopyName refuses an empty user or sheet id', () => {
    expect(() => localCopyName('', 's')).toThrow(/user id/)
    expect(() => localCopyName('u', '')).toThrow(/sheet id/)
  })
  it('parseLocalCopyName(name) rejects names that are not sheet copies', () => {
    for (const name of ['penumbra:answers', 'other:sheet:u:s', 'penumbra:sheet:u', 'penumbra:sheet::s', 'penumbra:sheet:u:s:x', 'penumbra:sheet:%E0%A4%A:s'])
      expect(parseLocalCopyName(name)).toBeNull()
    expect(isPenumbraName('y-indexeddb-demo')).toBe(false)
  })
})

describe('parseRegister(text), touchRegister and dropFromRegister', () => {
  it('parseRegister(text) keeps only Penumbra names with finite times', () => {
    const text = JSON.stringify({ 'penumbra:sheet:u:s': 5, 'penumbra:sheet:u:t': 'x', other: 3, 'penumbra:sheet:u:v': null })
    expect(parseRegister(text)).toEqual({ 'penumbra:sheet:u:s': 5 })
  })
  it('parseRegister(text) reads broken or missing text as an empty register', () => {
    for (const text of [null, '', '{', '[1,2]', '"x"', 'null']) expect(parseRegister(text)).toEqual({})
  })
  it('touchRegister and dropFromRegister return new registers and leave the old one alone', () => {
    const before = { 'penumbra:sheet:u:s': 1 }
    const touched = touchRegister(before, 'penumbra:sheet:u:t', 7)
    expect(touched).toEqual({ 'penumbra:sheet:u:s': 1, 'penumbra:sheet:u:t': 7 })
    expect(dropFromRegister(touched, ['penumbra:sheet:u:s'])).toEqual({ 'penumbra:sheet:u:t': 7 })
    expect(before).toEqual({ 'penumbra:sheet:u:s': 1 })
  })
})

describe('planExpiry(present, register, now)', () => {
  const a = localCopyName('u1', 'a')
  const b = localCopyName('u1', 'b')
  const c = localCopyName('u2', 'c')

  it('planExpiry clears copies unused for more than 30 days and keeps the others with their times', () => {
    const register = { [a]: NOW - 31 * DAY, [b]: NOW - 29 * DAY, [c]: NOW - 1000 }
    const plan = planExpiry([a, b, c], register, NOW)
    expect(plan.remove).toEqual([a])
    expect(plan.register).toEqual({ [b]: NOW - 29 * DAY, [c]: NOW - 1000 })
  })
  it('planExpiry keeps a copy used exactly 30 days ago and clears it one millisecond later', () => {
    expect(planExpiry([a], { [a]: NOW - LOCAL_COPY_MAX_AGE_MS }, NOW).remove).toEqual([])
    expect(planExpiry([a], { [a]: NOW - LOCAL_COPY_MAX_AGE_MS - 1 }, NOW).remove).toEqual([a])
  })
  it('planExpiry starts the clock for a database the register does not know', () => {
    const plan = planExpiry([a, 'penumbra:answers', 'someone-else'], {}, NOW)
    expect(plan.remove).toEqual([])
    expect(plan.register).toEqual({ [a]: NOW })
  })
  it('planExpiry forgets register entries whose database is gone', () => {
    expect(planExpiry([], { [a]: NOW - DAY }, NOW).register).toEqual({})
  })
  it('planExpiry goes by the register alone when the browser cannot list databases', () => {
    const plan = planExpiry(null, { [a]: NOW - 40 * DAY, [b]: NOW }, NOW)
    expect(plan.remove).toEqual([a])
    expect(plan.register).toEqual({ [b]: NOW })
  })
})

describe('planSignOut(present, register)', () => {
  it('planSignOut lists every Penumbra database of every person, and nothing of other sites', () => {
    const a = localCopyName('u1', 'a')
    const c = localCopyName('u2', 'c')
    expect(planSignOut([a, 'unrelated-db', 'penumbra:later-kind'], { [c]: 1 })).toEqual([a, 'penumbra:later-kind', c].sort())
    expect(planSignOut(null, { [c]: 1 })).toEqual([c])
  })
})

describe('noteChange(state, now, live) and noteSent(state, now)', () => {
  it('noteChange counts changes made while not live, one per burst', () => {
    let s = noteChange(NO_PENDING_EDITS, NOW, false)
    s = noteChange(s, NOW + 200, false) // same burst of typing
    s = noteChange(s, NOW + 200 + EDIT_GROUP_MS, false) // a new edit
    s = noteChange(s, NOW + 10_000, false)
    expect(s.count).toBe(3)
  })
  it('noteChange does not count changes made while live', () => {
    const s = noteChange(noteChange(NO_PENDING_EDITS, NOW, true), NOW + 10_000, true)
    expect(s.count).toBe(0)
  })
  it('noteChange starts a new edit after a live change, even within the grouping time', () => {
    let s = noteChange(NO_PENDING_EDITS, NOW, false)
    s = noteChange(s, NOW + 100, true)
    s = noteChange(s, NOW + 200, false)
    expect(s.count).toBe(2)
  })
  it('noteChange continues a count restored from the stored copy as a new edit', () => {
    expect(noteChange(restoredPending(3), NOW, false).count).toBe(4)
  })
  it('noteSent moves the waiting edits to "sent" with the time, and does nothing when none wait', () => {
    const sent = noteSent(noteChange(restoredPending(2), NOW, false), NOW + 5)
    expect(sent).toEqual({ count: 0, lastChangeAt: null, sent: { count: 3, at: NOW + 5 } })
    expect(noteSent(sent, NOW + 10)).toBe(sent)
  })
  it('restoredPending(stored) accepts only a positive whole number', () => {
    expect(restoredPending(4).count).toBe(4)
    for (const bad of [undefined, null, -1, 1.5, '3', NaN]) expect(restoredPending(bad).count).toBe(0)
  })
})

describe('badgeWords(input)', () => {
  const base: BadgeInput = { connection: 'offline', synced: false, readonly: false, closed: '', kept: true, pending: NO_PENDING_EDITS, now: NOW }
  const waiting3 = restoredPending(3)

  it('badgeWords says how many edits wait on this device while offline, and that they survive a reload', () => {
    const w = badgeWords({ ...base, pending: waiting3 })
    expect(w.tone).toBe('off')
    expect(w.text).toBe('Offline · 3 edits waiting on this device')
    expect(w.tip).toContain('3 edits are waiting on this device')
    expect(w.tip).toContain('survive a reload or a closed tab')
    expect(w.tip).toContain('sent when the server is back')
    expect(badgeWords({ ...base, pending: restoredPending(1) }).text).toBe('Offline · 1 edit waiting on this device')
  })
  it('badgeWords tells to keep the tab open when the browser cannot store the sheet', () => {
    const w = badgeWords({ ...base, kept: false, pending: waiting3 })
    expect(w.tip).toContain('held in this tab only')
    expect(w.tip).not.toContain('survive a reload')
  })
  it('badgeWords shows waiting edits while connecting and sending', () => {
    expect(badgeWords({ ...base, connection: 'connecting', pending: waiting3 }).text).toBe('Connecting… · 3 edits waiting')
    expect(badgeWords({ ...base, connection: 'online', pending: waiting3 }).text).toBe('Sending 3 edits…')
    expect(badgeWords({ ...base, connection: 'connecting' }).text).toBe('Connecting…')
  })
  it('badgeWords says when kept edits were sent, on the line for a while and in the tooltip after', () => {
    const at = new Date(2026, 11, 2, 14, 5, 30).getTime()
    const sent = noteSent(waiting3, at)
    const fresh = badgeWords({ ...base, connection: 'online', synced: true, pending: sent, now: at + 1000 })
    expect(fresh.tone).toBe('on')
    expect(fresh.text).toBe('Live · 3 edits sent')
    expect(fresh.tip).toContain('went to the server at 14:05')
    const later = badgeWords({ ...base, connection: 'online', synced: true, pending: sent, now: at + SENT_NOTE_MS })
    expect(later.text).toBe('Live')
    expect(later.tip).toContain('The 3 edits kept on this device went to the server at 14:05.')
  })
  it('badgeWords never shows waiting or sent edits to a reader', () => {
    const offline = badgeWords({ ...base, readonly: true, pending: waiting3 })
    expect(offline.text).toBe('Offline')
    expect(offline.tip).not.toMatch(/edit/)
    const live = badgeWords({ ...base, readonly: true, connection: 'online', synced: true, pending: noteSent(waiting3, NOW), now: NOW })
    expect(live.text).toBe('Live')
    expect(live.tip).toBe('You see every change as it is made.')
  })
  it('badgeWords puts the server’s reason first when the connection was closed for good', () => {
    const w = badgeWords({ ...base, closed: 'Your session has ended; sign in again to keep working on this sheet.', pending: waiting3 })
    expect(w.text).toBe('Disconnected')
    expect(w.tip).toBe('Your session has ended; sign in again to keep working on this sheet. 3 edits are still waiting on this device.')
  })
})
