/**
 * Working on one sheet in headless Chromium against the built app and the real server, as a researcher does:
 * a 2,000-step sweep (progress while it runs, a drawable selection of curves named by the swept parameter, plain tick
 * numbers on a linear axis), completing a function in a formula, undoing list operations one at a time, and the
 * server's first view of a sheet handing over to the live cards.
 * Each test makes its own sheet from a sheet file through the API, so they do not depend on the demo sheets' content.
 */
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, signIn, useBrowserSuite } from '../utils/browser'
import { card, connection, formulaText, resultText, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

/** The traces a figure's plot holds (Plotly keeps them on the graph div), by name; empty until it has drawn. */
async function plottedNames(page: Page, name: string): Promise<string[]> {
  return card(page, name).evaluate((el) => {
    const gd = el.querySelector('.js-plotly-plot') as (HTMLElement & { data?: { name?: string }[] }) | null
    return Array.isArray(gd?.data) ? gd.data.map((t) => t.name ?? '') : []
  })
}

/** An invented absorber: a direct-gap edge on a 1,000-point grid, a thickness, and the sweeps the tests draw. */
const SWEEP_SHEET = [
  { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
  { kind: 'parameter', name: 'd', value: 500, unit: 'nm', min: 10, max: 10000 },
  { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 1000)', unit: 'eV' },
  { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 3e4/cm/sqrt(eV))', unit: '1/cm' },
  { kind: 'formula', name: 'A1', source: 'absorbed_fraction(alpha, d)', unit: '%' },
  { kind: 'formula', name: 'A_mean', source: 'mean(A1)', unit: '%' },
  // 2,000 steps of a 1,000-point output: two million numbers back from the worker, far more curves than a plot can take
  { kind: 'sweep', name: 'gaps', parameter: 'Eg', from: 1, to: 2, steps: 2000, unit: 'eV', outputs: ['alpha'] },
  { kind: 'figure', name: 'fig_gaps', title: 'Edges for 2,000 gaps', traces: [{ x: 'E', y: 'alpha' }], sweep: 'gaps', sweepView: 'curves' },
  // a log-spaced thickness sweep shown on a linear axis
  { kind: 'sweep', name: 'thick_log', parameter: 'd', from: 10, to: 10000, steps: 25, scale: 'log', unit: 'nm', outputs: ['A_mean'] },
  { kind: 'figure', name: 'fig_thick', title: 'Mean absorptance', traces: [{ x: 'd', y: 'A_mean' }], sweep: 'thick_log', x: { scale: 'linear' } },
]

describe('the sheet page', () => {
  it('shows a 2,000-step sweep’s progress while it runs, then draws 60 evenly spread curves named by the swept parameter', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(page, 'Sweep of 2,000 gaps', SWEEP_SHEET)
    // record whether the sweep card ever shows its progress bar, however briefly (installed before the page loads)
    await page.addInitScript(() => {
      const w = window as unknown as { sawProgress?: boolean }
      w.sawProgress = false
      new MutationObserver(() => {
        if (document.querySelector('.pn-cell[data-cell-name="gaps"] .progress')) w.sawProgress = true
      }).observe(document, { subtree: true, childList: true })
    })
    await openLive(page, sheetId)

    // figures draw as they come near the viewport: once the sweep's own plot is in, this one may sit below that reach
    await card(page, 'fig_gaps').scrollIntoViewIfNeeded()
    await expect.poll(() => plottedNames(page, 'fig_gaps'), { timeout: 60_000 }).not.toEqual([])
    const names = (await plottedNames(page, 'fig_gaps')).filter((n) => n.startsWith('Eg = '))
    expect(names).toHaveLength(60)
    expect(names[0]).toBe('Eg = 1 eV')
    expect(names[names.length - 1]).toBe('Eg = 2 eV')
    await expect.poll(() => card(page, 'fig_gaps').innerText()).toContain('60 of the 2,000 curves are drawn, evenly spread over Eg')
    expect(await page.evaluate(() => (window as unknown as { sawProgress?: boolean }).sawProgress)).toBe(true)

    // the sweep card draws the same selection of its own result
    await card(page, 'gaps').scrollIntoViewIfNeeded()
    await expect.poll(() => plottedNames(page, 'gaps'), { timeout: 30_000 }).not.toEqual([])
    expect((await plottedNames(page, 'gaps')).filter((n) => n.startsWith('Eg = '))).toHaveLength(60)
  })

  it('shows an edited formula’s new result while a 2,000-step sweep that reads it is still computing', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    await openLive(page, await createSheet(page, 'Formula above a long sweep', [
      { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
      { kind: 'formula', name: 'Ebig', source: 'grid(1*eV, 3*eV, 20000)', unit: 'eV' },
      { kind: 'formula', name: 'k', source: '2' },
      { kind: 'formula', name: 'S', source: 'k * integrate(alpha_direct(Ebig, Eg, 1e4/cm/sqrt(eV)), Ebig) / eV' },
      { kind: 'sweep', name: 'long', parameter: 'Eg', from: 1, to: 2, steps: 2000, unit: 'eV', outputs: ['S'] },
    ]))
    const result = (name: string) => card(page, name).locator('.result').innerText()
    await expect.poll(() => result('long'), { timeout: 60_000 }).not.toMatch(/computing|Not computed/)
    // the charting library has loaded (its first load keeps the page busy for a moment)
    await expect.poll(() => card(page, 'long').locator('.js-plotly-plot').count(), { timeout: 30_000 }).toBe(1)
    const before = await result('S')
    // watch, in the page, for the moment S shows its new value while the sweep still shows its progress
    await page.evaluate(() => {
      const w = window as unknown as { early?: boolean }
      w.early = false
      const first = document.querySelector('.pn-cell[data-cell-name="S"] .result')?.textContent
      const timer = setInterval(() => {
        const s = document.querySelector('.pn-cell[data-cell-name="S"] .result')?.textContent
        const running = !!document.querySelector('.pn-cell[data-cell-name="long"] .progress')
        if (s !== first && s?.includes('=') && !s.includes('recomputing') && running) {
          w.early = true
          clearInterval(timer)
        }
      }, 5)
    })
    await card(page, 'k').locator('.cm-content').click()
    await page.keyboard.press('End')
    await page.keyboard.press('Backspace')
    await page.keyboard.type('4')
    await expect.poll(() => result('S'), { timeout: 30_000 }).not.toBe(before)
    await expect.poll(() => result('long'), { timeout: 60_000 }).not.toMatch(/computing/)
    expect(await page.evaluate(() => (window as unknown as { early?: boolean }).early)).toBe(true)
  })

  it('writes plain tick numbers on a linear axis of a log-spaced thickness sweep (1000, 2000 …, not 0.1×10⁴)', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    await openLive(page, await createSheet(page, 'Thickness on a linear axis', SWEEP_SHEET))
    await card(page, 'fig_thick').scrollIntoViewIfNeeded() // figures draw as they come near the viewport
    const ticks = card(page, 'fig_thick').locator('.xtick text')
    await expect.poll(() => ticks.count(), { timeout: 60_000 }).toBeGreaterThan(2)
    const labels = await ticks.allTextContents()
    expect(labels.some((t) => /×|10⁴|e\+/.test(t))).toBe(false)
    expect(labels).toContain('2000')
  })

  it('completes a library function with its brackets, and the closing bracket typed after it is not doubled', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    await openLive(page, await createSheet(page, 'Completion', [
      { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
      { kind: 'formula', name: 'lam', source: '', unit: 'nm' },
    ]))
    const editorBox = card(page, 'lam').locator('.cm-content')
    await editorBox.click()
    await page.keyboard.type('photon_wave')
    const option = page.locator('.cm-tooltip-autocomplete li[aria-selected]')
    await expect.poll(() => option.textContent()).toContain('photon_wavelength')
    await page.keyboard.press('Enter')
    await expect.poll(() => formulaText(page, 'lam')).toBe('photon_wavelength()')
    await page.keyboard.type('Eg') // the caret sits between the brackets
    await expect.poll(() => formulaText(page, 'lam')).toBe('photon_wavelength(Eg)')
    await page.keyboard.type(') * 2') // ")" steps over the closing bracket instead of adding one
    await expect.poll(() => formulaText(page, 'lam')).toBe('photon_wavelength(Eg) * 2')
    // 2 · h·c / 1.5 eV = 2 · 826.56 nm, to five figures (CODATA 2018: h·c/e = 1239.84198 nm·eV)
    await expect.poll(() => card(page, 'lam').locator('.result').innerText(), { timeout: 15_000 }).toContain('1653.1')
  })

  it('shows the server’s first view of the cards at once and hands over to the live cards, which take the clicks', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(page, 'First view <i>test</i>', [
      { kind: 'parameter', name: 'Eg', value: 1.52, unit: 'eV', min: 1, max: 2 },
      { kind: 'formula', name: 'lambda_g', source: 'photon_wavelength(Eg)', unit: 'nm' },
      { kind: 'note', text: '## Aim\nA note with <b>markup</b> kept as text.' },
    ])
    // note, before any script of the page runs, what the first view holds and when it gives way
    await page.addInitScript(() => {
      const w = window as unknown as { firstView?: { names: string[]; links: number; at?: number; liveAt?: number; goneAt?: number; both?: boolean } }
      const seen: NonNullable<typeof w.firstView> = { names: [], links: 0 }
      w.firstView = seen
      new MutationObserver(() => {
        const preview = document.getElementById('pn-preview')
        if (preview && seen.at === undefined && preview.querySelector('.pn-preview-card')) {
          seen.at = performance.now()
          seen.names = [...preview.querySelectorAll('.pn-preview-name')].map((e) => e.textContent ?? '')
          seen.links = preview.querySelectorAll('a, form, iframe, script, img').length
        }
        if (seen.liveAt === undefined && document.querySelector('.pn-cell')) {
          seen.liveAt = performance.now()
          // the live cards are drawn in the same frame as the first view leaves, or the first view is gone already
          requestAnimationFrame(() => (seen.both = !!document.getElementById('pn-preview')))
        }
        if (seen.at !== undefined && seen.goneAt === undefined && !preview) seen.goneAt = performance.now()
      }).observe(document, { childList: true, subtree: true })
    })
    await page.goto(`${e2e.server.url}/sheets/${sheetId}`)
    await expect.poll(() => connection(page), { timeout: 20_000 }).toContain('Live')
    await expect.poll(() => page.locator('#pn-preview').count()).toBe(0)
    const seen = await page.evaluate(() => (window as unknown as { firstView: { names: string[]; links: number; at?: number; liveAt?: number; goneAt?: number; both?: boolean } }).firstView)
    expect(seen.names).toEqual(['Eg', 'lambda_g'])
    expect(seen.links).toBe(0)
    expect(seen.at).toBeDefined()
    expect(seen.at!).toBeLessThan(seen.liveAt!)
    expect(seen.goneAt).toBeDefined()
    expect(seen.both).toBe(false)
    // the live card takes the keyboard and the mouse
    const value = card(page, 'Eg').getByLabel('Value')
    await value.click()
    await value.fill('1.6')
    await value.press('Enter')
    await expect.poll(() => resultText(page, 'lambda_g')).toMatch(/77[45]/)
    // another page of the app carries no first view, and coming back by the app's own links brings none either
    await page.getByRole('link', { name: 'Halvorsen Thin-Film Lab' }).first().click()
    await expect.poll(() => page.url()).toMatch(/\/labs\/[^/]+$/)
    expect(await page.locator('#pn-preview').count()).toBe(0)
  })

  it('undoes a delete made right after a duplicate on its own: the copy comes back, the original stays once', async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    const page = editor.page
    await signIn(page, e2e.server.url, DEMO.editor)
    await openLive(page, await createSheet(page, 'List operations', [
      { kind: 'parameter', name: 'a', value: 1, min: 0, max: 10 },
      { kind: 'formula', name: 'c', source: 'a * 2' },
    ]))
    const order = () => page.locator('.pn-cell').evaluateAll((els) => els.map((e) => (e as HTMLElement).dataset.cellName ?? '').join(','))
    await expect.poll(order).toBe('a,c')
    await card(page, 'c').focus()
    await page.keyboard.press('Control+KeyD') // duplicate: c_2 below c, focused
    await expect.poll(order).toBe('a,c,c_2')
    await page.keyboard.press('Delete') // delete the copy at once
    await expect.poll(order).toBe('a,c')
    await page.keyboard.press('Control+KeyZ')
    await expect.poll(order).toBe('a,c,c_2')
    await page.keyboard.press('Control+KeyZ')
    await expect.poll(order).toBe('a,c')
  })
})
