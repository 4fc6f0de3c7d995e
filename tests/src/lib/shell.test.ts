/** Pure helpers of the client shell: safe redirects after sign-in, dates and counts, the spectrum colours, roles. */
import { describe, expect, it } from 'vitest'
import { safeNext } from '../../../src/lib/navigation'
import { formatAgo, plural } from '../../../src/lib/format'
import { spectrumGradient, wavelengthToRgb } from '../../../src/lib/spectrum'
import { visibleBand } from '../../../shared/plot/visible'
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

describe('spectrumGradient (the brand strip)', () => {
  it('spectrumGradient() runs from 0% at 380 nm to 100% at 750 nm in the figures’ colours', () => {
    const css = spectrumGradient()
    const [r0, g0, b0] = wavelengthToRgb(380)
    const [r1, g1, b1] = wavelengthToRgb(750)
    expect(css.startsWith(`linear-gradient(to right, rgb(${r0} ${g0} ${b0}) 0.00%`)).toBe(true)
    expect(css.endsWith(`rgb(${r1} ${g1} ${b1}) 100.00%)`)).toBe(true)
  })
  it('spectrumGradient() colours 595 nm as the figures’ visible band does', () => {
    // the band's 590–600 nm segment takes the colour of its centre, 595 nm; the strip from 385 nm has a stop there
    const segment = visibleBand('nm', 10)!.find((s) => s.from === 590)!
    const [r, g, b] = wavelengthToRgb(595)
    expect(segment.color).toBe(`rgb(${r}, ${g}, ${b})`)
    expect(spectrumGradient(385, 745, 10)).toContain(`rgb(${r} ${g} ${b}) ${((210 / 360) * 100).toFixed(2)}%`)
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
