/**
 * The copy of a sheet kept in the browser, in headless Chromium against the built app and the real server: an editor
 * types into a formula while the server is away, reloads the page while it is still away and finds the edit (the
 * badge says it waits on this device), and when the server is back the edit reaches another browser and the stored
 * sheet. Then the clearing rules: a reader's page never shows edits its person made as an editor and never sent,
 * a deleted sheet's copy is dropped, and signing out leaves no Penumbra database in the browser.
 */
import { mkdirSync } from 'node:fs'
import path from 'node:path'
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { CSRF_HEADER } from '../../shared/schema/api'
import { DEMO, RESULTS_DIR, signIn, useBrowserSuite } from '../utils/browser'
import { card, connection, demoLabId, formulaText, resultText, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)
const labIdOf = (page: Page) => demoLabId(page, e2e.server.url)

async function userId(page: Page): Promise<string> {
  const body = (await (await page.request.get(`${e2e.server.url}/api/auth/me`)).json()) as { user: { id: string } }
  return body.user.id
}

/** Penumbra's IndexedDB databases in this browser. */
const databases = (page: Page) =>
  page.evaluate(async () => (await indexedDB.databases()).map((d) => d.name ?? '').filter((n) => n.startsWith('penumbra:')).sort())

/** True once the offline page keeper controls the page and holds the page, its scripts and the sheet's answers. */
const keptForOffline = (page: Page, sheetId: string) =>
  page.evaluate(async (id) => {
    if (!navigator.serviceWorker.controller) return false
    const pageCache = await caches.open('penumbra:page')
    const answers = await caches.open('penumbra:answers')
    return !!(await pageCache.match('/')) && !!(await answers.match('/api/auth/me')) && !!(await answers.match(`/api/sheets/${id}`))
  }, sheetId)

/** Types at the end of a formula and leaves its editor (an open completion list takes the first Escape). */
async function typeAtEnd(page: Page, name: string, text: string): Promise<void> {
  await card(page, name).locator('.cm-content').click()
  await page.keyboard.press('End')
  await page.keyboard.type(text, { delay: 20 })
  await expect
    .poll(
      async () => {
        await page.keyboard.press('Escape')
        return page.evaluate(() => !!document.activeElement?.closest('.cm-editor'))
      },
      { timeout: 10_000, interval: 300 },
    )
    .toBe(false)
}

/** The formula source of a cell in the sheet file the server builds from its database. */
async function storedSource(page: Page, sheetId: string, name: string): Promise<string | undefined> {
  const res = await page.request.get(`${e2e.server.url}/api/sheets/${sheetId}/file`)
  const file = (await res.json()) as { cells: { name?: string; source?: string }[] }
  return file.cells.find((c) => c.name === name)?.source
}

describe('the copy of a sheet kept in the browser', () => {
  it('keeps an edit made while the server is away through a reload, and sends it when the server is back', async () => {
    const tomas = await e2e.newBrowser({ label: 'editor' })
    const mira = await e2e.newBrowser({ label: 'owner' })
    await signIn(tomas.page, e2e.server.url, DEMO.editor)
    await signIn(mira.page, e2e.server.url, DEMO.owner)
    const sheetId = await createSheet(mira.page, 'Kept on the device', [
      { kind: 'parameter', name: 'a', value: 2, min: 0, max: 10 },
      { kind: 'formula', name: 'f', source: 'a + 1' },
    ])
    await openLive(tomas.page, sheetId)
    await openLive(mira.page, sheetId)
    await expect.poll(() => resultText(tomas.page, 'f')).toContain('3')
    // the copy is named by person and sheet, and the page can be opened again without the server
    expect(await databases(tomas.page)).toContain(`penumbra:sheet:${await userId(tomas.page)}:${sheetId}`)
    await expect.poll(() => keptForOffline(tomas.page, sheetId), { timeout: 15_000 }).toBe(true)
    // the sheet's page as the server sends it carries the cells (its first view): reloaded under the keeper's control,
    // it is still the plain page that is kept, with nothing of the sheet in it
    // (read as soon as the page is parsed: the keeper stores a page before handing it over, and the sheet page asks it
    // to fetch the plain page again a moment later)
    await tomas.page.reload({ waitUntil: 'domcontentloaded' })
    const keptPage = await tomas.page.evaluate(async () => (await (await caches.open('penumbra:page')).match('/'))?.text())
    expect(keptPage).toContain('<div id="app">')
    expect(keptPage).not.toContain('pn-preview-card')
    await expect.poll(() => connection(tomas.page), { timeout: 20_000 }).toContain('Live')

    await e2e.server.halt()
    await expect.poll(() => connection(tomas.page), { timeout: 15_000 }).toContain('Offline')
    await typeAtEnd(tomas.page, 'f', ' + 10')
    await expect.poll(() => connection(tomas.page)).toContain('Offline · 1 edit waiting on this device')
    await expect.poll(() => resultText(tomas.page, 'f')).toContain('13')
    mkdirSync(RESULTS_DIR, { recursive: true })
    await tomas.page.locator('.sheet-head').screenshot({ path: path.join(RESULTS_DIR, 'local-copy-badge-offline.png') })

    // a reload while the server is still away shows the edit, still waiting on this device
    await tomas.page.reload()
    await expect.poll(() => formulaText(tomas.page, 'f'), { timeout: 20_000 }).toBe('a + 1 + 10')
    await expect.poll(() => connection(tomas.page), { timeout: 20_000 }).toContain('Offline · 1 edit waiting on this device')
    await expect.poll(() => resultText(tomas.page, 'f'), { timeout: 20_000 }).toContain('13')
    expect(await formulaText(mira.page, 'f')).toBe('a + 1')

    // signing out now would delete the waiting edit with everything kept in the browser: the menu asks first
    await tomas.page.getByTestId('user-menu').click()
    await tomas.page.getByRole('menuitem', { name: 'Sign out' }).click()
    const question = tomas.page.getByRole('dialog', { name: 'Edits not sent yet' })
    await expect.poll(() => question.textContent()).toContain('1 edit made while the server could not be reached has not been sent yet')
    await question.getByRole('button', { name: 'Stay signed in' }).click()
    await expect.poll(() => question.isVisible()).toBe(false)
    expect(new URL(tomas.page.url()).pathname).toBe(`/sheets/${sheetId}`)
    await expect.poll(() => connection(tomas.page)).toContain('Offline · 1 edit waiting on this device')

    // the server comes back: the edit goes out, the badge says so, the other browser and the stored sheet have it
    await e2e.server.start()
    await expect.poll(() => connection(tomas.page), { timeout: 30_000 }).toContain('Live · 1 edit sent')
    await expect.poll(() => formulaText(mira.page, 'f'), { timeout: 30_000 }).toBe('a + 1 + 10')
    await expect.poll(() => resultText(mira.page, 'f'), { timeout: 15_000 }).toContain('13')
    await expect.poll(() => storedSource(mira.page, sheetId, 'f'), { timeout: 15_000 }).toBe('a + 1 + 10')
    expect(await tomas.page.getByTestId('connection').getAttribute('aria-label')).toMatch(/went to the server at \d\d:\d\d/)

    // after the next reload nothing waits any more
    await tomas.page.reload()
    await expect.poll(() => connection(tomas.page), { timeout: 20_000 }).toBe('Live')
  })

  it('a reader’s page drops a copy holding edits its person made as an editor and never sent', async () => {
    const mira = await e2e.newBrowser({ label: 'owner' })
    const tomas = await e2e.newBrowser({ label: 'editor, then viewer' })
    await signIn(mira.page, e2e.server.url, DEMO.owner)
    await signIn(tomas.page, e2e.server.url, DEMO.editor)
    const lab = await labIdOf(mira.page)
    const tomasId = await userId(tomas.page)
    const sheetId = await createSheet(mira.page, 'Role changes', [{ kind: 'formula', name: 'g', source: '2 * 3' }])
    await openLive(tomas.page, sheetId)

    await e2e.server.halt()
    await expect.poll(() => connection(tomas.page), { timeout: 15_000 }).toContain('Offline')
    await typeAtEnd(tomas.page, 'g', ' + 100')
    await expect.poll(() => connection(tomas.page)).toContain('1 edit waiting')
    await tomas.page.goto('about:blank')
    await e2e.server.start()

    // the owner makes Tomás a viewer before he comes back
    const res = await mira.page.request.patch(`${e2e.server.url}/api/labs/${lab}/members/${tomasId}`, { data: { role: 'viewer' } })
    expect(res.ok()).toBe(true)
    try {
      await openLive(tomas.page, sheetId)
      await expect.poll(() => tomas.page.getByTestId('readonly-note').isVisible(), { timeout: 10_000 }).toBe(true)
      await expect.poll(() => formulaText(tomas.page, 'g'), { timeout: 10_000 }).toBe('2 * 3')
      await expect.poll(() => resultText(tomas.page, 'g'), { timeout: 15_000 }).toContain('6')
      await expect.poll(() => connection(tomas.page), { timeout: 10_000 }).toBe('Live')
      expect(await storedSource(mira.page, sheetId, 'g')).toBe('2 * 3')
      // and it stays so: the kept edit never comes back
      await tomas.page.waitForTimeout(500)
      expect(await formulaText(tomas.page, 'g')).toBe('2 * 3')
      // his screen cannot be edited, and stays as the server has it after a reload from the reader's cache
      expect(await card(tomas.page, 'g').locator('.cm-content').getAttribute('contenteditable')).not.toBe('true')
      await tomas.page.reload()
      await expect.poll(() => connection(tomas.page), { timeout: 20_000 }).toBe('Live')
      await expect.poll(() => formulaText(tomas.page, 'g'), { timeout: 10_000 }).toBe('2 * 3')
    } finally {
      await mira.page.request.patch(`${e2e.server.url}/api/labs/${lab}/members/${tomasId}`, { data: { role: 'editor' } })
    }
  })

  it('drops the copy of a deleted sheet, and signing out leaves no Penumbra database in the browser', async () => {
    const mira = await e2e.newBrowser({ label: 'owner' })
    await signIn(mira.page, e2e.server.url, DEMO.owner)
    const mine = await userId(mira.page)
    const doomed = await createSheet(mira.page, 'To be deleted', [{ kind: 'formula', name: 'h', source: '1 + 1' }])
    const kept = await createSheet(mira.page, 'To be kept', [{ kind: 'formula', name: 'k', source: '2 + 2' }])
    await openLive(mira.page, kept)
    await openLive(mira.page, doomed)
    expect(await databases(mira.page)).toEqual([`penumbra:sheet:${mine}:${doomed}`, `penumbra:sheet:${mine}:${kept}`].sort())

    const res = await mira.page.request.delete(`${e2e.server.url}/api/sheets/${doomed}`, { headers: { [CSRF_HEADER]: '1' } })
    expect(res.status()).toBe(204)
    await expect.poll(() => connection(mira.page), { timeout: 15_000 }).toContain('Disconnected')
    await expect.poll(() => databases(mira.page), { timeout: 10_000 }).toEqual([`penumbra:sheet:${mine}:${kept}`])

    await openLive(mira.page, kept)
    await mira.page.getByTestId('user-menu').click()
    await mira.page.getByRole('menuitem', { name: 'Sign out' }).click()
    await mira.page.waitForURL((u) => u.pathname.startsWith('/sign-in'), { timeout: 15_000 })
    await expect.poll(() => databases(mira.page), { timeout: 10_000 }).toEqual([])
    expect(await mira.page.evaluate(async () => !!(await (await caches.open('penumbra:answers')).match('/api/auth/me')))).toBe(false)
  })
})
