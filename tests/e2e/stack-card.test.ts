/**
 * The stack card as a researcher uses it, in headless Chromium against the built app: a film on a glass slide over a
 * wavelength grid shows R, T, A and each layer's absorptance; adding a layer, typing its thickness and n, and moving
 * it changes the result; a formula reads the stack's output; a fit card takes a σ cell.
 */
import { describe, expect, it } from 'vitest'
import { DEMO, RESULTS_DIR, signIn, useBrowserSuite } from '../utils/browser'
import { card, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

/** An invented absorber film of the Halvorsen lab on a 1 mm slide. */
const STACK_SHEET = [
  { kind: 'formula', name: 'lam', source: 'grid(350*nm, 1000*nm, 261)', unit: 'nm' },
  { kind: 'formula', name: 'n_abs', source: 'cauchy_n(lam, 2.6, 0.04*um^2, 0)' },
  { kind: 'formula', name: 'k_abs', source: 'where(lam < 750*nm, 0.25, 0.002)' },
  {
    kind: 'stack', name: 'cell1', wavelength: 'lam', ambient: '1', angle: '0*deg', polarization: 'unpolarized',
    layers: [{ name: 'absorber', thickness: '300*nm', n: 'n_abs', k: 'k_abs' }],
    substrate: { name: 'glass', n: '1.52', k: '0', thickness: '1*mm', coherent: false },
  },
  { kind: 'formula', name: 'A_mean', source: 'mean(cell1.A_absorber)', unit: '%' },
]

describe('stack card', () => {
  it('shows R, T, A and each layer, takes a new layer typed in, and feeds formulas', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(page, 'Stack check', STACK_SHEET)
    await openLive(page, sheetId)

    const stack = card(page, 'cell1')
    const table = stack.locator('.outputs')
    await expect.poll(() => table.textContent(), { timeout: 20_000 }).toContain('cell1.A_absorber')
    expect(await table.textContent()).toContain('cell1.A_glass')
    await expect.poll(() => stack.locator('.js-plotly-plot').count(), { timeout: 30_000 }).toBeGreaterThan(0)
    const before = await card(page, 'A_mean').locator('.result').innerText()

    // a low-index layer on top: added at the bottom, named, given a thickness and n, then moved to the ambient side
    await stack.getByRole('button', { name: 'Add layer' }).click()
    const row = stack.locator('[data-layer="layer2"]')
    await expect.poll(() => row.count()).toBe(1)
    await row.getByLabel('Name of layer 2').fill('coat')
    await row.getByLabel('Name of layer 2').press('Enter')
    const coat = stack.locator('[data-layer="coat"]')
    await expect.poll(() => coat.count()).toBe(1)
    await coat.getByLabel('Thickness of coat').fill('95*nm')
    await coat.getByLabel('Thickness of coat').press('Enter')
    await coat.getByLabel('n of coat').fill('1.38')
    await coat.getByLabel('n of coat').press('Enter')
    await coat.getByRole('button', { name: 'Move coat towards the ambient' }).click()
    await expect.poll(() => stack.locator('[data-layer]').first().getAttribute('data-layer')).toBe('coat')
    await expect.poll(() => table.textContent(), { timeout: 20_000 }).toContain('cell1.A_coat')
    // an antireflection coat lets more light into the absorber
    await expect.poll(() => card(page, 'A_mean').locator('.result').innerText(), { timeout: 20_000 }).not.toBe(before)

    // a thickness without a unit is the stack's error, in words
    await coat.getByLabel('Thickness of coat').fill('95')
    await coat.getByLabel('Thickness of coat').press('Enter')
    await expect.poll(() => stack.textContent(), { timeout: 20_000 }).toMatch(/the thickness of layer coat is a plain number, but it needs a length/i)
    await coat.getByLabel('Thickness of coat').fill('95*nm')
    await coat.getByLabel('Thickness of coat').press('Enter')
    await expect.poll(() => table.textContent(), { timeout: 20_000 }).toContain('cell1.A_coat')
    await stack.screenshot({ path: `${RESULTS_DIR}/stack-card.png` })
  }, 240_000)

  it('adds a stack from the add menu that evaluates at once', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(page, 'Stack from the menu', [STACK_SHEET[0]])
    await openLive(page, sheetId)
    await page.getByRole('button', { name: 'Add cell' }).first().click()
    await page.locator('.kind[data-kind="stack"]').click()
    const stack = card(page, 'stack1')
    await expect.poll(() => stack.locator('.outputs').textContent(), { timeout: 20_000 }).toContain('stack1.A_film')
  })
})
