/**
 * Bringing in a measured spectrum as a researcher does: an instrument export (invented: film B of the fictional
 * Halvorsen Thin-Film Lab, semicolons and decimal commas, metadata above the header, wavelength descending) is dropped
 * on the sheet, the mapping is checked and confirmed, and the spectrum cell's columns are at once usable in a formula.
 */
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, signIn, useBrowserSuite } from '../utils/browser'
import { card, resultText, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

const EXPORT = [
  'Halvorsen Thin-Film Lab;film B on glass',
  'Operator;I. Halvorsen',
  'Wavelength (nm);T',
  '700;81,5',
  '650;80,0',
  '600;72,25',
  '550;55,0',
  '500;31,5',
  '',
].join('\r\n')

/** Drops a text file on the sheet page the way a file manager does (dragover, then drop with the file). */
async function dropFile(page: Page, name: string, text: string): Promise<void> {
  await page.evaluate(
    ([fileName, body]) => {
      const target = document.querySelector('.sheet-page')!
      const data = new DataTransfer()
      data.items.add(new File([body], fileName, { type: 'text/csv' }))
      target.dispatchEvent(new DragEvent('dragover', { dataTransfer: data, bubbles: true, cancelable: true }))
      target.dispatchEvent(new DragEvent('drop', { dataTransfer: data, bubbles: true, cancelable: true }))
    },
    [name, text] as const,
  )
}

describe('a measured spectrum on the sheet page', () => {
  it('drops an export on the sheet, confirms the mapping, and uses the spectrum’s columns in a formula', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(page, 'Film B transmission', [
      { kind: 'formula', name: 'Tmax', source: 'max(filmB.T)', unit: '%' },
      { kind: 'formula', name: 'lam_min', source: 'min(filmB.wavelength)', unit: 'nm' },
    ])
    await openLive(page, sheetId)
    await expect.poll(() => resultText(page, 'Tmax')).toMatch(/filmB/)

    await dropFile(page, 'film B.csv', EXPORT)
    const dialog = page.locator('.spectrum-import')
    await expect.poll(() => dialog.isVisible(), { timeout: 20_000 }).toBe(true)
    await expect.poll(() => dialog.innerText(), { timeout: 20_000 }).toContain('semicolon-separated, decimal comma')
    const mapping = page.getByTestId('column-mapping')
    // "T" names its quantity but no unit: a guess, marked as one (values up to 81.5 read as percent)
    expect(await mapping.getByTestId('guess').count()).toBe(1)
    expect(await dialog.innerText()).toContain('descending (700 to 500)')
    await dialog.getByLabel('Spectrum name').fill('filmB')
    await page.getByTestId('import-spectrum').click()

    await expect.poll(() => card(page, 'filmB').count(), { timeout: 20_000 }).toBe(1)
    const spectrum = await card(page, 'filmB').innerText()
    expect(spectrum).toContain('filmB.wavelength')
    expect(spectrum).toContain('film B.csv')
    await expect.poll(() => resultText(page, 'Tmax'), { timeout: 20_000 }).toMatch(/81\.5\s*%/)
    await expect.poll(() => resultText(page, 'lam_min'), { timeout: 20_000 }).toMatch(/500\s*nm/)
    await page.screenshot({ path: '/tmp/penumbra-spectrum-import.png', fullPage: true })

    // the live document holds metadata only; the sheet file written on export carries the numbers
    const file = (await (await page.request.get(`${e2e.server.url}/api/sheets/${sheetId}/file`)).json()) as { cells: { name?: string; columns?: Record<string, { values?: number[] }> }[] }
    expect(file.cells.find((c) => c.name === 'filmB')?.columns?.T.values).toEqual([31.5, 55, 72.25, 80, 81.5])
  })

  it('shows the line and column of a bad cell in the dialog and imports nothing', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(page, 'A broken export', [{ kind: 'note', text: 'measured data goes here' }])
    await openLive(page, sheetId)
    await dropFile(page, 'broken.csv', 'nm,%T\n400,10\n410,11\n420,twelve\n430,13\n')
    await expect.poll(() => page.getByTestId('import-error').innerText(), { timeout: 20_000 }).toContain('Line 4, column 2: "twelve" is not a number')
    expect(await page.getByTestId('import-spectrum').isDisabled()).toBe(true)
  })
})
