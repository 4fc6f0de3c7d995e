/**
 * From a measured spectrum to a band gap on the sheet page, as a researcher does it: an instrument export dropped on
 * the sheet and its mapping confirmed, "Extract α" on the spectrum's card, a Tauc window dragged across the fit's plot, and the gap
 * with its standard error and the window sensitivity read off the fit card; then the gap taken over as a parameter.
 */
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, RESULTS_DIR, signIn, useBrowserSuite } from '../utils/browser'
import { card, dropFile, sheetPage } from '../utils/sheetPage'
import { alphaEdge, photonEnergy, reflectance, transmittanceSlab } from '../../shared/optics'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)
const eV = 1.602176634e-19 // J, exact (2019 SI)

/**
 * An invented film of the Halvorsen lab: a direct edge at 1.5 eV with a 30 meV Urbach tail, 500 nm thick, index 3,
 * exported as wavelength, T in % (rounded to 0.001 %, as an instrument would) and R of one face as a fraction. T comes
 * from the incoherent slab formula transmittance_slab (J. I. Pankove, Optical Processes in Semiconductors (1971),
 * ch. 4), R from Fresnel at normal incidence.
 */
function filmExport(): string {
  const nm = Array.from({ length: 301 }, (_, i) => 400 + 2 * i)
  const E = photonEnergy(Float64Array.from(nm, (x) => x * 1e-9)) as Float64Array
  const alpha = alphaEdge(E, 1.5 * eV, (4e9 * eV) / 1e-4, 0.5, 0.03 * eV) as Float64Array
  const R = reflectance(3, 0) as number
  const T = transmittanceSlab(alpha, 500e-9, R) as Float64Array
  const rows = nm.map((x, i) => `${x},${(Math.round(T[i] * 1e5) / 1e3).toFixed(3)},${R.toFixed(4)}`)
  return ['Wavelength (nm),T (%),R', ...rows, ''].join('\r\n')
}

/** Client coordinates of photon energy `x` (eV) on the x axis of the plot inside a card, halfway up the plot area. */
async function plotPoint(page: Page, name: string, x: number): Promise<{ x: number; y: number }> {
  return card(page, name).evaluate((el, at) => {
    type Axis = { _offset: number; _length: number; range: [number, number] }
    const gd = el.querySelector('.js-plotly-plot') as (HTMLElement & { _fullLayout?: { xaxis: Axis; yaxis: Axis } }) | null
    if (!gd?._fullLayout) throw new Error('the fit plot is not drawn')
    const { xaxis: xa, yaxis: ya } = gd._fullLayout
    const rect = gd.getBoundingClientRect()
    return { x: rect.left + xa._offset + ((at - xa.range[0]) / (xa.range[1] - xa.range[0])) * xa._length, y: rect.top + ya._offset + ya._length / 2 }
  }, x)
}

describe('from a spectrum to a band gap', () => {
  it('extracts α from T and R, takes a Tauc window dragged on the plot, and shows Eg ± error with its window sensitivity', async () => {
    const editor = await e2e.newBrowser({ label: 'editor', viewport: { width: 1280, height: 1000 } })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    await openLive(page, await createSheet(page, 'Film B band gap', [{ kind: 'note', text: 'Film B, annealed: transmission and reflection.' }]))
    await dropFile(page, 'filmB.csv', filmExport())
    const importing = page.locator('.spectrum-import')
    await expect.poll(() => importing.isVisible(), { timeout: 20_000 }).toBe(true)
    await importing.getByLabel('Spectrum name').fill('filmB')
    await page.getByTestId('import-spectrum').click()
    await expect.poll(() => card(page, 'filmB').count(), { timeout: 20_000 }).toBe(1)

    await card(page, 'filmB').getByRole('button', { name: 'Extract α…' }).click()
    const dialog = page.getByRole('dialog', { name: 'Extract α from filmB' })
    await expect.poll(() => dialog.isVisible()).toBe(true)
    // the chosen route shows its formula and where it holds
    const info = dialog.getByTestId('alpha-route-info')
    expect(await info.innerText()).toContain('alpha_from_transmittance(T, R, d)')
    expect(await info.innerText()).toContain('interference fringes of a thin film are not removed')
    // the columns were recognised, and say that they were guessed
    expect(await dialog.locator('.guess').count()).toBe(3)
    await dialog.getByRole('button', { name: 'Add the cells' }).click()

    for (const name of ['d_filmB', 'alpha_filmB', 'E_filmB', 'gap_filmB', 'fig_alpha_filmB']) await expect.poll(() => card(page, name).count()).toBe(1)
    // the α cell is an ordinary formula, carrying its validity note
    expect(await card(page, 'alpha_filmB').innerText()).toMatch(/alpha_from_transmittance\(filmB\.\w+, filmB\.\w+, d_filmB\)/)

    // no window yet: the Tauc plot is open for dragging one
    const fit = card(page, 'gap_filmB')
    await expect.poll(() => fit.locator('.js-plotly-plot').count(), { timeout: 30_000 }).toBe(1)
    await expect.poll(() => fit.getByTestId('fit-window-readout').count(), { timeout: 30_000 }).toBe(1)
    await fit.locator('.js-plotly-plot').scrollIntoViewIfNeeded()
    const a = await plotPoint(page, 'gap_filmB', 1.62)
    const b = await plotPoint(page, 'gap_filmB', 1.95)
    await page.mouse.move(a.x, a.y)
    await page.mouse.down()
    await page.mouse.move((a.x + b.x) / 2, a.y, { steps: 5 })
    // while the pointer is down the line and result already follow the window
    expect(await fit.getByTestId('fit-window-readout').innerText()).toMatch(/^Eg = 1\.\d+ ± [0-9.]+ eV/)
    await page.mouse.move(b.x, b.y, { steps: 5 })
    await page.mouse.up()

    // the window is stored in the fit cell (in the x cell's unit, eV), and the cell's own result follows
    await expect.poll(async () => Number(await fit.getByRole('textbox', { name: 'Window start' }).inputValue()), { timeout: 20_000 }).toBeCloseTo(1.62, 2)
    expect(Number(await fit.getByRole('textbox', { name: 'Window end' }).inputValue())).toBeCloseTo(1.95, 2)
    const readout = await fit.getByTestId('fit-window-readout').innerText()
    const m = /^Eg = ([0-9.]+) ± ([0-9.]+) eV/.exec(readout)
    expect(m, readout).not.toBeNull()
    // above the tail's junction (≈ 1.515 eV) the model edge is an exact Tauc line at 1.5 eV; the 0.001 % rounding of T
    // leaves only a small scatter
    expect(Number(m![1])).toBeCloseTo(1.5, 2)
    expect(Number(m![2])).toBeGreaterThan(0)
    expect(Number(m![2])).toBeLessThan(0.01)
    await expect.poll(() => fit.locator('.rows').innerText(), { timeout: 20_000 }).toContain('Eg')
    expect(await fit.getByTestId('fit-residuals').count()).toBe(1)

    const sensitivity = await fit.getByTestId('window-sensitivity').innerText()
    expect(sensitivity).toMatch(/Eg moves by up to [0-9.e−-]+ eV as either end moves by up to ±[0-9.]+ eV/)
    expect(sensitivity).toContain('as chosen')
    await page.screenshot({ path: `${RESULTS_DIR}/spectrum-to-gap.png`, fullPage: true })

    // the gap becomes a parameter cell in one step
    await fit.getByRole('button', { name: 'Use as parameter' }).click()
    await expect.poll(() => card(page, 'Eg_gap_filmB').count()).toBe(1)

    // the α series goes out as CSV from its card, on the photon-energy grid its figure draws it against: a header with
    // units, one row per measured wavelength
    const [download] = await Promise.all([page.waitForEvent('download', { timeout: 30_000 }), card(page, 'alpha_filmB').getByTestId('download-csv').click()])
    expect(download.suggestedFilename()).toMatch(/alpha_filmB\.csv$/)
    const lines = readFileSync(await download.path(), 'utf8').trim().split(/\r?\n/)
    expect(lines[0]).toBe('E_filmB (eV),alpha_filmB (1/cm)')
    expect(lines).toHaveLength(302)
    const [x, alpha] = lines[301].split(',').map(Number)
    // 1000 nm is hc/λ = 1.23984198433 eV (hc/e = 1239.84198433 nm·eV from the exact 2019 SI values of h, c and e)
    expect(x).toBeCloseTo(1.23984198433, 9)
    expect(Number.isFinite(alpha)).toBe(true)
  }, 240_000)
})
