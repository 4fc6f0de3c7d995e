/**
 * The sheet page's own keyboard scheme (command palette, Alt+arrows, Ctrl+D, F2) and the rough edges a new user met:
 * figure editor fields that would not take typing, a new figure's first trace, units in card headers, an empty
 * formula shown as an error, a value in the wrong unit, formula messages, toasts over the header, a card scrolled
 * under the sticky header, the import error, the spectrum table on a phone, and removal from the lab while on a sheet.
 * Each test makes its own sheet in the demo lab through the API; the removal test runs last (it removes the editor).
 */
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, signIn, useBrowserSuite } from '../utils/browser'
import { card, demoLabId, formulaText, sheetPage } from '../utils/sheetPage'
import { CSRF_HEADER } from '../../shared/schema/api'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

const order = (page: Page) => page.locator('.pn-cell').evaluateAll((els) => els.map((e) => (e as HTMLElement).dataset.cellName ?? '').join(','))
const focusedCell = (page: Page) => page.evaluate(() => (document.activeElement as HTMLElement | null)?.closest<HTMLElement>('.pn-cell')?.dataset.cellName ?? '')
const focusedIsCard = (page: Page) => page.evaluate(() => !!document.activeElement?.classList.contains('pn-cell'))

async function editorPage(label: string): Promise<Page> {
  const b = await e2e.newBrowser({ label })
  await signIn(b.page, e2e.server.url, DEMO.editor)
  return b.page
}

describe('the keyboard scheme of the sheet page', () => {
  it('steps with Alt+↑↓, carries a cell with Alt+Shift+↑↓, duplicates with Ctrl+D, edits with F2, and ignores the old single letters', async () => {
    const page = await editorPage('keys')
    await openLive(page, await createSheet(page, 'Keys', [
      { kind: 'parameter', name: 'a', value: 1, min: 0, max: 10 },
      { kind: 'parameter', name: 'b', value: 2, min: 0, max: 10 },
      { kind: 'formula', name: 'c', source: 'a + b' },
    ]))
    await expect.poll(() => order(page)).toBe('a,b,c')
    await card(page, 'a').focus()
    await page.keyboard.press('Alt+ArrowDown')
    await expect.poll(() => focusedCell(page)).toBe('b')
    await page.keyboard.press('Alt+Shift+ArrowUp')
    await expect.poll(() => order(page)).toBe('b,a,c')
    await expect.poll(() => focusedCell(page)).toBe('b')

    // the letters of the old scheme do nothing on a card now
    for (const key of ['j', 'k', 'a', 'A', 'd', 'Enter']) await page.keyboard.press(key)
    await page.waitForTimeout(300)
    expect(await order(page)).toBe('b,a,c')
    expect(await page.locator('.el-dialog:visible').count()).toBe(0)
    expect(await focusedCell(page)).toBe('b')

    await page.keyboard.press('Control+KeyD')
    await expect.poll(() => order(page)).toBe('b,b_2,a,c')

    // F2 into the formula, Alt+↑ from inside it goes to the cell above without touching the text, F2 back to the card
    await card(page, 'c').focus()
    await page.keyboard.press('F2')
    await expect.poll(() => page.evaluate(() => !!document.activeElement?.closest('.cm-editor'))).toBe(true)
    await page.keyboard.press('Alt+ArrowUp')
    await expect.poll(() => focusedCell(page)).toBe('a')
    expect(await focusedIsCard(page)).toBe(true)
    expect(await formulaText(page, 'c')).toBe('a + b')
    await page.keyboard.press('F2')
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Value')
    await page.keyboard.press('F2')
    await expect.poll(() => focusedIsCard(page)).toBe(true)
    expect(await focusedCell(page)).toBe('a')
  })

  it('adds and finds cells through the Ctrl+K palette, and lists the scheme in the shortcuts panel and on the help page', async () => {
    const page = await editorPage('palette')
    await openLive(page, await createSheet(page, 'Palette', [
      { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
      { kind: 'formula', name: 'lam_g', source: 'photon_wavelength(Eg)', unit: 'nm' },
      { kind: 'note', text: 'A note at the end.' },
    ]))
    const command = page.getByLabel('Command', { exact: true })

    // find by what the formula says, jump there
    await page.keyboard.press('Control+KeyK')
    await command.fill('photon_wave')
    await expect.poll(() => page.locator('[role="option"]').first().textContent()).toContain('Go to lam_g')
    await page.keyboard.press('Enter')
    await expect.poll(() => focusedCell(page)).toBe('lam_g')

    // add above the selected cell by typing
    await page.keyboard.press('Control+KeyK')
    await command.fill('formula above')
    await page.keyboard.press('Enter')
    await expect.poll(() => order(page)).toBe('Eg,f1,lam_g,')
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Cell name')

    // the shortcuts panel (?) and the help page show the same scheme
    await card(page, 'Eg').focus()
    await page.keyboard.press('?')
    const panel = page.getByTestId('shortcuts')
    await expect.poll(() => panel.isVisible()).toBe(true)
    const listed = await panel.innerText()
    for (const words of ['Ctrl+K', 'Alt+↑ Alt+↓', 'Alt+Shift+↑', 'Ctrl+D', 'F2', 'Delete']) expect(listed).toContain(words)
    expect(listed).not.toMatch(/\bK J\b|Shift\+A|\bthen P, F/)
    await page.goto(`${e2e.server.url}/help`)
    const help = page.locator('#keyboard')
    await expect.poll(() => help.innerText()).toContain('Ctrl+K')
    expect(await help.innerText()).toContain('Alt+Shift+↑')
  })
})

describe('rough edges of the sheet page', () => {
  it('takes typing in the figure editor’s title, trace label, axis label and limits, and starts a new figure with an array against its grid', async () => {
    const page = await editorPage('figure')
    await openLive(page, await createSheet(page, 'Figure fields', [
      { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 121)', unit: 'eV' },
      { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 3e4/cm/sqrt(eV))', unit: '1/cm' },
      { kind: 'formula', name: 'alpha_max', source: 'max(alpha)', unit: '1/cm' },
    ]))
    await expect.poll(() => card(page, 'alpha_max').locator('.result').innerText(), { timeout: 20_000 }).toContain('=')
    await page.keyboard.press('Control+KeyK')
    await page.getByLabel('Command', { exact: true }).fill('figure')
    await page.keyboard.press('Enter')
    const fig = card(page, 'fig1')
    await expect.poll(() => fig.count()).toBe(1)
    // a new figure opens with its editor open
    await expect.poll(() => fig.getByRole('button', { name: 'Close editor' }).count()).toBe(1)
    // an array against the grid it is computed on, not the last two cells (a single number against an array)
    await expect.poll(() => fig.getByLabel('Trace 1: y').locator('xpath=ancestor::div[contains(@class,"el-select__wrapper")]').innerText()).toContain('alpha')
    expect(await fig.getByLabel('Trace 1: y').locator('xpath=ancestor::div[contains(@class,"el-select__wrapper")]').innerText()).not.toContain('alpha_max')
    expect(await fig.getByLabel('Trace 1: x').locator('xpath=ancestor::div[contains(@class,"el-select__wrapper")]').innerText()).toMatch(/^E\b/)

    const typeInto = async (label: string, text: string) => {
      const field = fig.getByLabel(label, { exact: true })
      await field.click()
      await page.keyboard.type(text, { delay: 15 })
      expect(await field.inputValue()).toBe(text)
      await page.keyboard.press('Enter')
      await expect.poll(() => field.inputValue()).toBe(text)
    }
    await typeInto('Figure title', 'Edge of film C')
    await typeInto('Trace 1: label', 'direct edge')
    await typeInto('x axis label', 'photon energy')
    await typeInto('x axis from', '1.3')
    await typeInto('x axis to', '2.2')
    // the figure draws what was typed
    await expect.poll(() => fig.innerText(), { timeout: 20_000 }).toContain('Edge of film C')
  })

  it('writes units in card headers as results do, hints instead of an error in a new formula, greys a value in the wrong unit, and says write 532*nm', async () => {
    const page = await editorPage('units')
    await openLive(page, await createSheet(page, 'Units', [
      { kind: 'parameter', name: 't', value: 2, unit: 'um' },
      { kind: 'formula', name: 'B', source: '1e6*eV/cm^2', unit: 'eV/cm^2' },
      { kind: 'formula', name: 'wrong', source: '2*nm', unit: 'eV' },
      { kind: 'formula', name: 'lam', source: '532 nm', unit: 'nm' },
      { kind: 'formula', name: 'blank', source: '' },
    ]))
    const unitField = (name: string) => card(page, name).getByLabel('Display unit')
    await expect.poll(() => unitField('t').inputValue()).toBe('µm')
    expect(await unitField('B').inputValue()).toBe('eV/cm²')
    await expect.poll(() => card(page, 'B').locator('.result').innerText(), { timeout: 20_000 }).toContain('eV/cm²')
    // while the field has focus it reads as typed, so it can be edited
    await unitField('t').click()
    expect(await unitField('t').inputValue()).toBe('um')
    await page.keyboard.press('Tab')
    await expect.poll(() => unitField('t').inputValue()).toBe('µm')

    const blank = card(page, 'blank').locator('.result')
    await expect.poll(() => blank.innerText(), { timeout: 20_000 }).toContain('Type a formula')
    expect(await card(page, 'blank').locator('.result .error').count()).toBe(0)

    const wrong = card(page, 'wrong').locator('.result')
    await expect.poll(() => wrong.locator('[data-mismatch]').count(), { timeout: 20_000 }).toBe(1)
    expect(await wrong.innerText()).toMatch(/display unit eV is for an energy/)
    const grey = await wrong.locator('.scalar').evaluate((el) => getComputedStyle(el).color)
    const ink = await card(page, 't').locator('.result .scalar').evaluate((el) => getComputedStyle(el).color)
    expect(grey).not.toBe(ink)

    await expect.poll(() => card(page, 'lam').locator('.result').innerText(), { timeout: 20_000 }).toMatch(/write 532\*nm, not "532 nm"/i)
  })

  it('keeps toasts off the header’s Help link, stops a card scrolled into view below the sticky header, and words the import error', async () => {
    const page = await editorPage('layout')
    const cells: unknown[] = [{ kind: 'parameter', name: 'top', value: 1 }]
    for (let i = 0; i < 14; i++) cells.push({ kind: 'note', text: `Filler note ${i}.\n\n${'A long line of text. '.repeat(20)}` })
    cells.push({ kind: 'parameter', name: 'last_one', value: 2 })
    await openLive(page, await createSheet(page, 'Layout', cells))

    await page.keyboard.press('Control+KeyS')
    const toast = page.locator('.el-message').first()
    await expect.poll(() => toast.isVisible()).toBe(true)
    const help = page.locator('header').getByRole('link', { name: 'Help' }).first()
    const h = (await help.boundingBox())!
    // (polled: the toast slides in from above)
    await expect.poll(async () => (await toast.boundingBox())?.y ?? 0).toBeGreaterThanOrEqual(h.y + h.height)

    await page.keyboard.press('Control+KeyK')
    await page.getByLabel('Command', { exact: true }).fill('last_one')
    await page.keyboard.press('Enter')
    await expect.poll(() => focusedCell(page)).toBe('last_one')
    // one up: the note above comes into view from above, and its top stops below the sticky header
    await page.keyboard.press('Alt+ArrowUp')
    await expect.poll(() => page.evaluate(() => document.activeElement?.classList.contains('kind-note'))).toBe(true)
    const cardTop = await page.evaluate(() => document.activeElement!.getBoundingClientRect().top)
    const headBottom = await page.locator('.sheet-head').evaluate((el) => el.getBoundingClientRect().bottom)
    expect(cardTop).toBeGreaterThanOrEqual(headBottom - 1)

    await page.getByRole('button', { name: 'Import', exact: true }).click()
    const chooser = page.waitForEvent('filechooser')
    await page.locator('.el-upload-dragger').click()
    await (await chooser).setFiles({ name: 'broken.penumbra.json', mimeType: 'application/json', buffer: Buffer.from('{ "format": "penumbra.sheet", ') })
    const problems = page.locator('.problems')
    await expect.poll(() => problems.innerText()).toMatch(/^The file is not valid JSON/)
  })

  it('tells a phone user that the spectrum table scrolls sideways, and does not on a wide screen', async () => {
    const phone = await e2e.newBrowser({ label: 'phone', viewport: { width: 390, height: 800 } })
    await signIn(phone.page, e2e.server.url, DEMO.editor)
    const spectrum = {
      kind: 'spectrum', name: 'filmC',
      columns: { wavelength: { unit: 'nm', values: [400, 500, 600, 700] }, T: { unit: '%', values: [10, 30, 50, 60] }, R: { unit: '%', values: [20, 21, 22, 23] } },
    }
    const sheetId = await createSheet(phone.page, 'Spectrum on a phone', [spectrum])
    await openLive(phone.page, sheetId)
    const cue = card(phone.page, 'filmC').getByTestId('scroll-cue')
    await expect.poll(() => cue.isVisible()).toBe(true)
    const wide = await editorPage('wide')
    await wide.setViewportSize({ width: 1280, height: 900 })
    await openLive(wide, sheetId)
    await expect.poll(() => card(wide, 'filmC').locator('.el-table').count()).toBe(1)
    expect(await card(wide, 'filmC').getByTestId('scroll-cue').isVisible()).toBe(false)
  })

  it('keeps the sheet toolbar on one line with four people present at 1280 px, lists the others in each browser, and overlaps nothing at 900 px', async () => {
    const roles = ['owner', 'editor', 'reviewer', 'viewer'] as const
    const people = await Promise.all(roles.map((role) => e2e.newBrowser({ label: role, viewport: { width: 1280, height: 800 } })))
    for (const [i, role] of roles.entries()) await signIn(people[i].page, e2e.server.url, DEMO[role])
    // the demo thickness study: the longest title, and a snapshot count on its Snapshots button
    const labId = await demoLabId(people[0].page, e2e.server.url)
    const sheets = (await (await people[0].page.request.get(`${e2e.server.url}/api/labs/${labId}/sheets`)).json()) as { sheets: { id: string; title: string }[] }
    const sheetId = sheets.sheets.find((s) => s.title.startsWith('Absorber thickness study'))!.id
    for (const b of people) await openLive(b.page, sheetId)

    /** Every visible control of the toolbar (connection badge, avatars, buttons): its box, and the toolbar's box. */
    const toolbar = (page: Page) =>
      page.locator('.sheet-head .tools').evaluate((tools) => {
        const box = (el: Element) => {
          const r = el.getBoundingClientRect()
          return { top: r.top, bottom: r.bottom, left: r.left, right: r.right, height: r.height }
        }
        const items = [...tools.querySelectorAll('[data-testid="connection"], .avatar, button:not(.avatar)')]
          .filter((el) => el.getBoundingClientRect().width > 0)
          .map((el) => ({ label: (el.getAttribute('aria-label') ?? el.textContent ?? '').trim(), ...box(el) }))
        return { tools: box(tools), items }
      })

    for (const [i, role] of roles.entries()) {
      const page = people[i].page
      const others = roles.filter((r) => r !== role).map((r) => DEMO[r].name)
      await expect
        .poll(async () => {
          const label = (await page.getByTestId('people').getAttribute('aria-label')) ?? ''
          return others.filter((name) => !label.includes(name))
        }, { timeout: 20_000 })
        .toEqual([])
      const { tools, items } = await toolbar(page)
      const button = items.find((it) => it.label === 'Export')!
      expect(button, `${role}: the Export button`).toBeTruthy()
      // one line: every control's middle lies within the Export button's height, and the bar is no taller than it
      for (const it of items) {
        const middle = (it.top + it.bottom) / 2
        expect(middle > button.top && middle < button.bottom, `${role}: "${it.label}" sits on another line`).toBe(true)
      }
      expect(items.filter((it) => /: on the sheet|: in /.test(it.label))).toHaveLength(4)
      expect(tools.height, `${role}: toolbar height`).toBeLessThan(button.height * 1.5)
      expect(tools.right, `${role}: toolbar inside the window`).toBeLessThanOrEqual(1280)
    }

    // at 900 px the toolbar may take two lines, but no two controls overlap and none leaves the window
    for (const [i, role] of roles.entries()) {
      const page = people[i].page
      await page.setViewportSize({ width: 900, height: 800 })
      await expect.poll(async () => (await toolbar(page)).tools.right).toBeLessThanOrEqual(900)
      const { items } = await toolbar(page)
      const head = await page.locator('.sheet-head .titles').evaluate((el) => el.getBoundingClientRect().toJSON() as { bottom: number; right: number; left: number; top: number })
      for (const [a, x] of items.entries()) {
        expect(x.right, `${role}: "${x.label}" inside the window`).toBeLessThanOrEqual(900)
        const apart = (y: { top: number; bottom: number; left: number; right: number }) =>
          y.right <= x.left + 1 || x.right <= y.left + 1 || y.bottom <= x.top + 1 || x.bottom <= y.top + 1
        expect(apart(head), `${role}: "${x.label}" over the title`).toBe(true)
        for (const y of items.slice(a + 1)) {
          // avatars overlap each other on purpose (a stack of faces); nothing else does
          if (x.label.includes(': ') && y.label.includes(': ')) continue
          expect(apart(y), `${role}: "${x.label}" over "${y.label}"`).toBe(true)
        }
      }
    }
  }, 180_000)

  it('drops to no role when the person is removed from the lab while on a sheet: one clear sentence, no Editor, Add cell or Import', async () => {
    const page = await editorPage('removed')
    const sheetId = await createSheet(page, 'Removal', [{ kind: 'parameter', name: 'x', value: 1 }])
    await openLive(page, sheetId)
    expect(await page.getByRole('button', { name: 'Add cell', exact: true }).count()).toBe(1)

    const owner = await e2e.newBrowser({ label: 'owner' })
    await signIn(owner.page, e2e.server.url, DEMO.owner)
    const labId = await demoLabId(owner.page, e2e.server.url)
    const members = (await (await owner.page.request.get(`${e2e.server.url}/api/labs/${labId}/members`)).json()) as { members: { userId: string; email: string }[] }
    const editor = members.members.find((m) => m.email === DEMO.editor.email)!
    const res = await owner.page.request.delete(`${e2e.server.url}/api/labs/${labId}/members/${editor.userId}`, { headers: { [CSRF_HEADER]: '1' } })
    expect(res.ok()).toBe(true)

    const banner = page.getByTestId('closed-banner')
    await expect.poll(() => banner.innerText(), { timeout: 20_000 }).toMatch(/^You are no longer a member of this lab\. /)
    expect(await banner.innerText()).not.toMatch(/lab Changes/)
    expect(await page.getByTestId('role').innerText()).toBe('no role in this lab any more')
    expect(await page.getByRole('button', { name: 'Add cell', exact: true }).count()).toBe(0)
    expect(await page.getByRole('button', { name: 'Import', exact: true }).count()).toBe(0)
    expect(await page.locator('.sheet-head').innerText()).not.toContain('Editor')
  })
})
