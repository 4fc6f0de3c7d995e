/**
 * What a researcher and a reader read on the cards and in the lab dialogs, in headless Chromium against the built app:
 * the create-lab dialog (its message on an empty name, a fresh form each time it opens, the new lab opened), a Tauc
 * fit's slope with its SI unit, a blocked cell that names its failed input (asking only an editor to fix it), fit
 * results as a list on a phone, a description written from the card's header (an empty one takes no room, so the
 * first click on a field of the card lands), and a reader's empty sheet. Each test makes its own sheet through the API.
 */
import { describe, expect, it } from 'vitest'
import { DEMO, signIn, useBrowserSuite } from '../utils/browser'
import { card, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

/** An invented direct-gap edge (α ∝ √(E − Eg)/E), a Tauc fit of it, and a broken formula with a dependent. */
const EDGE_SHEET = [
  { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
  { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 301)', unit: 'eV' },
  { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 3e4/cm/sqrt(eV))', unit: '1/cm' },
  { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 2.0, unit: 'eV' },
  { kind: 'formula', name: 'broken', source: 'alpha_direct(E, Eg', unit: '1/cm' },
  { kind: 'formula', name: 'twice', source: 'broken * 2', unit: '1/cm' },
]

describe('lab dialogs', () => {
  it('the create-lab dialog asks for a name, opens with an empty form again, and opens the new lab', async () => {
    const owner = await e2e.newBrowser({ label: 'owner' })
    const page = owner.page
    await signIn(page, e2e.server.url, DEMO.owner)
    await page.goto(`${e2e.server.url}/labs`)
    await page.getByRole('button', { name: 'Create a lab' }).first().click()
    const dialog = page.getByRole('dialog', { name: 'Create a lab' })
    await dialog.getByRole('button', { name: 'Create lab' }).click()
    await expect.poll(() => dialog.getByText('Give the lab a name.').isVisible()).toBe(true)

    // closing and opening again gives a fresh form without the old message
    await dialog.getByLabel('Lab name').fill('Half-typed name')
    await dialog.getByRole('button', { name: 'Cancel' }).click()
    await page.getByRole('button', { name: 'Create a lab' }).first().click()
    await expect.poll(() => dialog.getByLabel('Lab name').inputValue()).toBe('')
    await expect.poll(() => dialog.getByText('Give the lab a name.').count()).toBe(0)

    await dialog.getByLabel('Lab name').fill('Perovskite Edge Group')
    await dialog.getByRole('button', { name: 'Create lab' }).click()
    await page.waitForURL((u) => /^\/labs\/[^/]+$/.test(u.pathname), { timeout: 15_000 })
    await expect.poll(() => page.getByRole('heading', { name: 'Perovskite Edge Group' }).isVisible()).toBe(true)
  })
})

describe('cards', () => {
  it('shows the Tauc slope in eV/cm² (the units of its x and y cells), and a blocked cell names its failed input, asking only an editor to fix it', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'Cards check', EDGE_SHEET)
    await openLive(editor.page, sheetId)

    const fit = card(editor.page, 'edge')
    await expect.poll(() => fit.locator('.el-table').textContent(), { timeout: 20_000 }).toContain('eV/cm²')
    expect(await fit.locator('.el-table').textContent()).not.toMatch(/\bSI\b/)

    const blocked = card(editor.page, 'twice').locator('.blocked')
    await expect.poll(() => blocked.textContent(), { timeout: 20_000 }).toContain('broken')
    expect(await blocked.textContent()).toContain('Fix that cell first.')
    // the failed input's name takes you to it
    await blocked.getByRole('button', { name: 'broken' }).click()
    await expect.poll(() => editor.page.evaluate(() => (document.activeElement as HTMLElement | null)?.dataset.cellName)).toBe('broken')

    const reviewer = await e2e.newBrowser({ label: 'reviewer' })
    await signIn(reviewer.page, e2e.server.url, DEMO.reviewer)
    await openLive(reviewer.page, sheetId)
    const readerBlocked = card(reviewer.page, 'twice').locator('.blocked')
    await expect.poll(() => readerBlocked.textContent(), { timeout: 20_000 }).toContain('broken')
    expect(await readerBlocked.textContent()).not.toContain('Fix that cell first.')
    // read only, the window reads as a value with its unit right after it
    const from = card(reviewer.page, 'edge').getByLabel('Window start')
    expect(await from.inputValue()).toBe('1.6')
    const gap = await card(reviewer.page, 'edge').evaluate((el) => {
      const input = el.querySelector<HTMLInputElement>('input[aria-label="Window start"]')!
      const suffix = input.closest('.el-input')!.querySelector('.el-input__suffix')!
      return suffix.getBoundingClientRect().left - input.getBoundingClientRect().right
    })
    expect(gap).toBeLessThan(24)
  })

  it('opens a fit card’s select with the first click, and writes a description asked for from the card’s header', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'Descriptions', EDGE_SHEET)
    await openLive(editor.page, sheetId)
    const fit = card(editor.page, 'edge')
    // every result is in (nothing above moves any more) before the field's place on its card is measured
    await expect.poll(() => fit.locator('.el-table').textContent(), { timeout: 20_000 }).toContain('eV/cm²')
    await expect.poll(() => card(editor.page, 'twice').locator('.blocked').count(), { timeout: 20_000 }).toBe(1)
    await fit.scrollIntoViewIfNeeded()
    const offset = () => fit.evaluate((el) => el.querySelector('input[aria-label="x cell"]')!.getBoundingClientRect().top - el.getBoundingClientRect().top)
    const before = await offset()
    await fit.getByLabel('x cell').click()
    await expect.poll(() => editor.page.locator('.el-select-dropdown:visible').count()).toBeGreaterThan(0)
    expect(await offset()).toBe(before)
    await editor.page.keyboard.press('Escape')

    expect(await fit.getByLabel('Description').count()).toBe(0)
    await fit.getByRole('button', { name: 'add a description' }).click()
    await expect.poll(() => editor.page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Description')
    await editor.page.keyboard.type('Direct gap of the invented edge.')
    await fit.getByLabel('x cell').click() // leaving the field writes it
    await expect.poll(() => fit.getByLabel('Description').inputValue()).toBe('Direct gap of the invented edge.')
    expect(await fit.getByRole('button', { name: 'add a description' }).count()).toBe(0)

    // a reader sees it as text
    const viewer = await e2e.newBrowser({ label: 'viewer' })
    await signIn(viewer.page, e2e.server.url, DEMO.viewer)
    await openLive(viewer.page, sheetId)
    await expect.poll(() => card(viewer.page, 'edge').locator('.description').textContent(), { timeout: 15_000 }).toBe('Direct gap of the invented edge.')
  })

  it('lists fit results as value ± error with the unit on a phone, without a sideways-scrolling table', async () => {
    const phone = await e2e.newBrowser({ label: 'phone', viewport: { width: 390, height: 844 } })
    await signIn(phone.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(phone.page, 'Cards on a phone', EDGE_SHEET)
    await openLive(phone.page, sheetId)
    const list = card(phone.page, 'edge').locator('dl[aria-label="Fit results"]')
    await expect.poll(() => list.textContent(), { timeout: 20_000 }).toContain('eV/cm²')
    expect(await list.textContent()).toContain('band gap')
    expect(await card(phone.page, 'edge').locator('.el-table').count()).toBe(0)
    const overflow = await card(phone.page, 'edge').evaluate((el) => el.scrollWidth - el.clientWidth)
    expect(overflow).toBeLessThanOrEqual(1)
  })

  it('adds a parameter from the keyboard through the command palette: its name, Enter, then the number typed replaces the starting value', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'Keyboard', [])
    await openLive(editor.page, sheetId)
    const page = editor.page
    await page.keyboard.press('Control+KeyK')
    await page.getByLabel('Command', { exact: true }).fill('param')
    await page.keyboard.press('Enter')
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Cell name')
    await page.keyboard.type('T_cell')
    await page.keyboard.press('Enter')
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Value')
    await page.keyboard.type('300')
    await page.keyboard.press('Enter')
    const value = card(page, 'T_cell').getByLabel('Value')
    await expect.poll(() => value.inputValue()).toBe('300')
    // outside the new cell's slider range: said once on the card, not twice
    await expect.poll(() => card(page, 'T_cell').textContent(), { timeout: 15_000 }).toMatch(/maximum|range/)
    const mentions = await card(page, 'T_cell').evaluate((el) => (el.textContent ?? '').match(/outside the slider|above the maximum/g)?.length ?? 0)
    expect(mentions).toBe(1)
  })

  it('opens a new figure with its editor open and the caret in its title, from Add cell and from the command palette', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'New figures', EDGE_SHEET.slice(0, 3))
    await openLive(editor.page, sheetId)
    const page = editor.page
    const figures = page.locator('.pn-cell[data-kind="figure"]')
    const focusedLabel = () => page.evaluate(() => document.activeElement?.getAttribute('aria-label'))

    await page.getByRole('button', { name: 'Add cell' }).first().click()
    await page.locator('.kind[data-kind="figure"]').click()
    await expect.poll(() => figures.count(), { timeout: 15_000 }).toBe(1)
    const first = figures.first()
    await expect.poll(() => first.locator('.pn-figure-editor').count()).toBe(1)
    expect(await first.getByRole('button', { name: 'Close editor' }).getAttribute('aria-expanded')).toBe('true')
    await expect.poll(focusedLabel).toBe('Figure title')
    await page.keyboard.type('Edge of the invented film')
    await page.keyboard.press('Enter')
    await expect.poll(() => first.getByLabel('Figure title').inputValue()).toBe('Edge of the invented film')
    // the title is in the shared document, not only in the field
    const titles = async () => {
      const file = (await (await page.request.get(`${e2e.server.url}/api/sheets/${sheetId}/file`)).json()) as { cells: { kind: string; title?: string }[] }
      return file.cells.filter((c) => c.kind === 'figure').map((c) => c.title ?? '')
    }
    await expect.poll(titles, { timeout: 15_000 }).toEqual(['Edge of the invented film'])

    await first.focus()
    await page.keyboard.press('Control+KeyK')
    await page.getByLabel('Command', { exact: true }).fill('figure')
    await page.keyboard.press('Enter')
    await expect.poll(() => figures.count(), { timeout: 15_000 }).toBe(2)
    await expect.poll(() => page.locator('.pn-figure-editor').count()).toBe(2)
    await expect.poll(focusedLabel).toBe('Figure title')
    await page.keyboard.type('Second look')
    expect(await page.evaluate(() => (document.activeElement as HTMLInputElement).value)).toBe('Second look')
  })

  it('labels a note’s preview while it is edited, hints at Markdown for an empty one, and a missing sheet leads back to the labs', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'Notes', [
      { kind: 'note', name: 'intro', text: '## Film Q-3\n\nMeasured on the lab spectrophotometer.' },
      { kind: 'note', name: 'blank', text: '' },
    ])
    await openLive(editor.page, sheetId)
    const intro = card(editor.page, 'intro')
    await intro.getByRole('button', { name: 'Edit' }).click()
    await expect.poll(() => intro.locator('.preview-label').textContent()).toBe('As it reads on the sheet:')
    expect(await intro.locator('.note-body.preview h2').textContent()).toBe('Film Q-3')
    await intro.getByRole('button', { name: 'Done' }).click()
    await expect.poll(() => intro.locator('.preview-label').count()).toBe(0)
    const blank = card(editor.page, 'blank')
    await blank.getByRole('button', { name: 'Edit' }).click()
    await expect.poll(() => blank.locator('.preview-label').textContent()).toContain('Markdown')

    await editor.page.goto(`${e2e.server.url}/sheets/00000000-0000-4000-8000-000000000000`)
    await expect.poll(() => editor.page.getByRole('heading', { name: 'This sheet could not be opened' }).isVisible(), { timeout: 15_000 }).toBe(true)
    await editor.page.getByRole('button', { name: 'My labs' }).click()
    await editor.page.waitForURL((u) => u.pathname === '/labs', { timeout: 15_000 })
  })

  it('tells a viewer of an empty sheet that its cells appear as an editor adds them', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'Nothing yet', [])
    const viewer = await e2e.newBrowser({ label: 'viewer' })
    await signIn(viewer.page, e2e.server.url, DEMO.viewer)
    await openLive(viewer.page, sheetId)
    await expect.poll(() => viewer.page.locator('.empty').textContent()).toContain('When an editor of the lab adds some')
    expect(await viewer.page.getByRole('button', { name: 'Add the first cell' }).count()).toBe(0)
  })
})
