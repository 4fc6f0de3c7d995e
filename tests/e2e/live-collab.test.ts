/**
 * Two editors on one sheet in two headless Chromium browsers against the built app and the real server: they type
 * into the same formula at once and end with the same text and result, each sees the other's coloured caret and
 * which cell the other is in; then the server goes away, both keep editing, and after it comes back every edit
 * reaches the other editor and a viewer who opens the sheet afresh.
 */
import { describe, expect, it } from 'vitest'
import { DEMO, signIn, useBrowserSuite } from '../utils/browser'
import { card, connection, formulaText, resultText, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

describe('two editors on one sheet', () => {
  it('converge when typing into one formula at once, see each other’s carets, and keep offline edits until the server is back', async () => {
    const mira = await e2e.newBrowser({ label: 'owner' })
    const tomas = await e2e.newBrowser({ label: 'editor' })
    await signIn(mira.page, e2e.server.url, DEMO.owner)
    await signIn(tomas.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(mira.page, 'Typing together', [
      { kind: 'parameter', name: 'a', value: 2, min: 0, max: 10 },
      { kind: 'parameter', name: 'b', value: 3, min: 0, max: 10 },
      { kind: 'formula', name: 'f', source: 'a + b' },
      { kind: 'formula', name: 'g', source: 'f * 10' },
    ])
    await openLive(mira.page, sheetId)
    await openLive(tomas.page, sheetId)
    await expect.poll(() => resultText(tomas.page, 'g')).toContain('50')

    // both in formula f: Mira at its end, Tomás at its start
    await card(mira.page, 'f').locator('.cm-content').click()
    await mira.page.keyboard.press('End')
    await card(tomas.page, 'f').locator('.cm-content').click()
    await tomas.page.keyboard.press('Home')

    // each sees the other in f: an avatar on the card and a caret in the editor, in that person's colour
    await expect.poll(() => card(mira.page, 'f').locator('.others').getAttribute('aria-label'), { timeout: 10_000 }).toContain(DEMO.editor.name)
    await expect.poll(() => card(tomas.page, 'f').locator('.others').getAttribute('aria-label'), { timeout: 10_000 }).toContain(DEMO.owner.name)
    await expect.poll(() => card(mira.page, 'f').locator('.cm-ySelectionCaret').count(), { timeout: 10_000 }).toBe(1)
    const caretColour = await card(mira.page, 'f').locator('.cm-ySelectionCaret').evaluate((el) => getComputedStyle(el).borderLeftColor || getComputedStyle(el).backgroundColor)
    const avatarColour = await card(mira.page, 'f').locator('.others .avatar').evaluate((el) => getComputedStyle(el).backgroundColor)
    expect(caretColour).toBe(avatarColour)
    expect(await tomas.page.getByTestId('people').getAttribute('aria-label')).toContain(DEMO.owner.name)

    // both type at the same time
    await Promise.all([mira.page.keyboard.type(' + 4', { delay: 30 }), tomas.page.keyboard.type('1 + ', { delay: 30 })])
    await expect.poll(async () => (await formulaText(mira.page, 'f')) === (await formulaText(tomas.page, 'f')), { timeout: 10_000 }).toBe(true)
    expect(await formulaText(mira.page, 'f')).toBe('1 + a + b + 4')
    // (1 + 2 + 3 + 4) · 10 on both screens
    await expect.poll(() => resultText(mira.page, 'g'), { timeout: 10_000 }).toContain('100')
    await expect.poll(() => resultText(tomas.page, 'g'), { timeout: 10_000 }).toContain('100')

    // Mira leaves the editor: her caret leaves Tomás's screen
    // (a completion list still open after typing takes the first Escape, as it should: press until the editor is left)
    await expect
      .poll(
        async () => {
          await mira.page.keyboard.press('Escape')
          return mira.page.evaluate(() => !!document.activeElement?.closest('.cm-editor'))
        },
        { timeout: 10_000, interval: 300 },
      )
      .toBe(false)
    await expect.poll(() => card(tomas.page, 'f').locator('.cm-ySelectionCaret').count(), { timeout: 10_000 }).toBe(0)
    await tomas.page.keyboard.press('Escape')

    // the server goes away; both badges say so, and both keep working
    await e2e.server.halt()
    await expect.poll(() => connection(mira.page), { timeout: 15_000 }).toContain('Offline')
    await expect.poll(() => connection(tomas.page), { timeout: 15_000 }).toContain('Offline')
    const value = card(mira.page, 'a').getByLabel('Value')
    await value.fill('5')
    await value.press('Enter')
    await card(tomas.page, 'g').locator('.cm-content').click()
    await tomas.page.keyboard.press('End')
    await tomas.page.keyboard.type(' + 1')
    await tomas.page.keyboard.press('Escape')
    // each computes its own edit at once, offline: (1 + 5 + 3 + 4) · 10 and (1 + 2 + 3 + 4) · 10 + 1
    await expect.poll(() => resultText(mira.page, 'g')).toContain('130')
    await expect.poll(() => resultText(tomas.page, 'g')).toContain('101')

    // the server comes back: both reconnect and exchange what they did meanwhile
    await e2e.server.start()
    await expect.poll(() => connection(mira.page), { timeout: 30_000 }).toContain('Live')
    await expect.poll(() => connection(tomas.page), { timeout: 30_000 }).toContain('Live')
    await expect.poll(() => formulaText(mira.page, 'g'), { timeout: 15_000 }).toBe('f * 10 + 1')
    await expect.poll(() => card(tomas.page, 'a').getByLabel('Value').inputValue(), { timeout: 15_000 }).toBe('5')
    await expect.poll(() => resultText(mira.page, 'g'), { timeout: 15_000 }).toContain('131')
    await expect.poll(() => resultText(tomas.page, 'g'), { timeout: 15_000 }).toContain('131')

    // and the server kept it: a viewer opening the sheet now sees both edits
    const lena = await e2e.newBrowser({ label: 'viewer' })
    await signIn(lena.page, e2e.server.url, DEMO.viewer)
    await openLive(lena.page, sheetId)
    await expect.poll(() => formulaText(lena.page, 'g'), { timeout: 15_000 }).toBe('f * 10 + 1')
    await expect.poll(() => resultText(lena.page, 'g'), { timeout: 15_000 }).toContain('131')
  })
})
