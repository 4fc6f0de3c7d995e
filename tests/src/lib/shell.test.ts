/** Pure helpers of the client shell: safe redirects after sign-in, dates and counts, the spectrum colours, roles. */
import { describe, expect, it } from 'vitest'
import { safeNext } from '../../../src/lib/navigation'
import { formatAgo, plural } from '../../../src/lib/format'
import { spectrumGradient, wavelengthToRgb } from '../../../src/lib/spectrum'
import { canDeleteSheet, canEditSheets, canManageMembers } from '../../../src/lib/roles'

describe('safeNext(next)', () => {
  it('safeNext(path) follows a path inside the app, with its query', () => {
    expect(safeNext('/labs/abc?tab=members')).toBe('/labs/abc?tab=members')
    expect(safeNext(['/invitations/tok', '/x'])).toBe('/invitations/tok')
  })
  it('safeNext(url) refuses other sites and odd values', () => {
    for (const bad of ['https://evil.example/', '//evil.example', '/\\evil.example', 'labs', '', undefined, null, 42, ['//x']])
      expect(safeNext(bad)).toBeNull()
  })
})

describe('formatAgo(ms, now) and plural(n, word)', () => {
  const now = Date.UTC(2026, 0, 15, 12, 0, 0)
  it('formatAgo(ms, now) reads minutes, hours and yesterday', () => {
    expect(formatAgo(now - 10_000, now)).toBe('just now')
    expect(formatAgo(now - 60_000, now)).toBe('1 minute ago')
    expect(formatAgo(now - 5 * 60_000, now)).toBe('5 minutes ago')
    expect(formatAgo(now - 3 * 3_600_000, now)).toBe('3 hours ago')
    expect(formatAgo(now - 26 * 3_600_000, now)).toBe('yesterday')
    expect(formatAgo(now - 3 * 86_400_000, now)).toBe('3 days ago')
  })
  it('plural(n, word) agrees the noun with the count', () => {
    expect(plural(1, 'sheet')).toBe('1 sheet')
    expect(plural(0, 'sheet')).toBe('0 sheets')
    expect(plural(4, 'member')).toBe('4 members')
  })
})

describe('wavelengthToRgb(nm)', () => {
  // Expected values follow from the piecewise-linear approximation itself (ramps, roll-off, gamma 0.8), worked by
  // hand: 550 nm → R = (550 − 510)/70 = 0.5714, 255·0.5714^0.8 = 162.9 → 163, G = 255.
  it('wavelengthToRgb(550) gives green-yellow [163, 255, 0]', () => {
    expect(wavelengthToRgb(550)).toEqual([163, 255, 0])
  })
  it('wavelengthToRgb(380) is a dim violet and wavelengthToRgb(750) a dim red (the eye’s roll-off)', () => {
    // 380 nm: R = B = 1, intensity 0.3 → 255·0.3^0.8 = 97.3 → 97
    expect(wavelengthToRgb(380)).toEqual([97, 0, 97])
    // 750 nm: R = 1, intensity 0.3 + 0.7·30/80 = 0.5625 → 255·0.5625^0.8 = 160.9 → 161
    expect(wavelengthToRgb(750)).toEqual([161, 0, 0])
  })
  it('wavelengthToRgb(nm) is black outside 380–780 nm', () => {
    expect(wavelengthToRgb(300)).toEqual([0, 0, 0])
    expect(wavelengthToRgb(900)).toEqual([0, 0, 0])
  })
  it('spectrumGradient() runs from 0% at 380 nm to 100% at 750 nm', () => {
    const css = spectrumGradient()
    expect(css.startsWith('linear-gradient(to right, rgb(97 0 97) 0.00%')).toBe(true)
    expect(css.endsWith('rgb(161 0 0) 100.00%)')).toBe(true)
  })
})

describe('role helpers (DESIGN §2)', () => {
  it('canEditSheets(role) is true for owners and editors only', () => {
    expect(['owner', 'editor', 'reviewer', 'viewer'].map((r) => canEditSheets(r as never))).toEqual([true, true, false, false])
  })
  it('canManageMembers(role) is true for owners only', () => {
    expect(['owner', 'editor', 'reviewer', 'viewer'].map((r) => canManageMembers(r as never))).toEqual([true, false, false, false])
  })
  it('canDeleteSheet(role, createdBy, userId) lets an editor delete only their own sheets', () => {
    expect(canDeleteSheet('owner', 'someone', 'me')).toBe(true)
    expect(canDeleteSheet('editor', 'me', 'me')).toBe(true)
    expect(canDeleteSheet('editor', 'someone', 'me')).toBe(false)
    expect(canDeleteSheet('reviewer', 'me', 'me')).toBe(false)
    expect(canDeleteSheet('viewer', 'me', 'me')).toBe(false)
  })
})
