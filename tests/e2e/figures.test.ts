/**
 * Figures on the demo sheets: the charting library waits until a figure nears the viewport (and never before the
 * first cards), plotly's own floating toolbar is nowhere, and each figure's own toolbar resets the view and saves PNG,
 * SVG (with Fira embedded) and CSV files.
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { describe, expect, it } from 'vitest'
import type { Locator, Page } from 'playwright-core'
import { DEMO, DEMO_LAB, RESULTS_DIR, signIn, useBrowserSuite } from '../utils/browser'

const e2e = useBrowserSuite()

async function demoSheetId(page: Page, titleStart: string): Promise<string> {
  const base = e2e.server.url
  const labs = (await (await page.request.get(`${base}/api/labs`)).json()) as { labs: { id: string; name: string }[] }
  const lab = labs.labs.find((l) => l.name === DEMO_LAB)!
  const sheets = (await (await page.request.get(`${base}/api/labs/${lab.id}/sheets`)).json()) as { sheets: { id: string; title: string }[] }
  const sheet = sheets.sheets.find((s) => s.title.startsWith(titleStart))
  if (!sheet) throw new Error(`no demo sheet titled "${titleStart}…"`)
  return sheet.id
}

const plotlyRequested = (urls: string[]) => urls.some((u) => /\/assets\/plotly[^/]*\.js$/.test(u))

/**
 * A drawn figure's x-axis range as plotly last drew it: `_rl` is the range in use (with autorange the stored
 * `range` can keep plotly's placeholder −1 to 6).
 */
const xRange = (figure: Locator) =>
  figure.locator('.js-plotly-plot').evaluate((el) => {
    const axis = (el as unknown as { _fullLayout: { xaxis: { range: number[]; _rl?: number[] } } })._fullLayout.xaxis
    return [...(axis._rl ?? axis.range)]
  })

describe('figures', () => {
  it('loads the charting library only when a figure nears the viewport, after the first cards', async () => {
    const b = await e2e.newBrowser()
    await signIn(b.page, e2e.server.url, DEMO.owner)
    // the thickness study's figures are its last three cells, far below the first screen
    const id = await demoSheetId(b.page, 'Absorber thickness study')
    const requests: string[] = []
    b.page.on('request', (r) => requests.push(r.url()))
    await b.page.goto(`${e2e.server.url}/sheets/${id}`)
    await expect.poll(() => b.page.locator('.pn-cell').count(), { timeout: 30_000 }).toBeGreaterThan(0)
    // results have arrived and the page has settled, yet no figure is near: no library
    await expect.poll(() => b.page.locator('.pn-cell .result').count(), { timeout: 30_000 }).toBeGreaterThan(0)
    await b.page.waitForTimeout(1500)
    expect(plotlyRequested(requests)).toBe(false)
    expect(await b.page.locator('.pn-plot .main-svg').count()).toBe(0)

    // scrolling down to the figures loads it and draws them
    await b.page.locator('.pn-plot').first().scrollIntoViewIfNeeded()
    await expect.poll(() => b.page.locator('.pn-plot .main-svg').count(), { timeout: 30_000 }).toBeGreaterThan(0)
    expect(plotlyRequested(requests)).toBe(true)
    // plotly keeps an empty container; its toolbar and buttons are never made
    expect(await b.page.locator('.modebar, .modebar-group, .modebar-btn').count()).toBe(0)
  }, 300_000)

  it('gives each figure its own toolbar: reset view, and PNG, SVG (Fira embedded) and CSV files', async () => {
    const b = await e2e.newBrowser()
    const page = b.page
    await signIn(page, e2e.server.url, DEMO.owner)
    const id = await demoSheetId(page, 'Film H-17')
    await page.goto(`${e2e.server.url}/sheets/${id}`)
    const figure = page.locator('.pn-plot').filter({ has: page.locator('.pn-figure-toolbar') }).first()
    await figure.scrollIntoViewIfNeeded()
    await expect.poll(() => figure.locator('.main-svg').count(), { timeout: 30_000 }).toBeGreaterThan(0)
    // plotly's floating toolbar is nowhere, not even on hover
    await figure.locator('.plot').hover()
    expect(await page.locator('.modebar, .modebar-group, .modebar-btn').count()).toBe(0)
    mkdirSync(RESULTS_DIR, { recursive: true })
    await figure.screenshot({ path: path.join(RESULTS_DIR, 'figure-toolbar.png') })
    const toolbar = figure.getByRole('toolbar', { name: 'Figure' })
    for (const name of ['Reset view', 'Save as PNG', 'Save as SVG', 'Save as CSV']) expect(await toolbar.getByRole('button', { name }).count(), name).toBe(1)

    // zoom by dragging across the plot, then reset
    // plotly's placeholder range (−1 to 6) until the data's own range is set
    await expect.poll(() => xRange(figure), { timeout: 20_000 }).not.toEqual([-1, 6])
    const before = await xRange(figure)
    const box = (await figure.locator('.nsewdrag').first().boundingBox())!
    await page.mouse.move(box.x + box.width * 0.3, box.y + box.height * 0.5)
    await page.mouse.down()
    await page.mouse.move(box.x + box.width * 0.45, box.y + box.height * 0.5, { steps: 5 })
    await page.mouse.up()
    await expect.poll(() => xRange(figure), { timeout: 20_000 }).not.toEqual(before)
    await toolbar.getByRole('button', { name: 'Reset view' }).click()
    await expect.poll(async () => (await xRange(figure)).map((v) => Number(v.toPrecision(9))), { timeout: 20_000 }).toEqual(before.map((v) => Number(v.toPrecision(9))))

    // SVG: Fira Sans and Fira Mono embedded as data: fonts, and every text drawn in them
    const save = async (name: string) => {
      const [download] = await Promise.all([page.waitForEvent('download', { timeout: 30_000 }), toolbar.getByRole('button', { name }).click()])
      const file = await download.path()
      return { name: download.suggestedFilename(), bytes: readFileSync(file) }
    }
    const svgFile = await save('Save as SVG')
    expect(svgFile.name).toMatch(/\.svg$/)
    const svg = svgFile.bytes.toString('utf8')
    expect(svg).toMatch(/@font-face\{font-family:'Fira Sans';[^}]*src:url\(data:font\/woff2;base64,[A-Za-z0-9+/=]{1000,}\)/)
    expect(svg).toMatch(/@font-face\{font-family:'Fira Mono';[^}]*src:url\(data:font\/woff2;base64,/)
    const families = [...svg.matchAll(/font-family:\s*([^;"]+)/g)].map((m) => m[1].trim()).filter((f) => !f.startsWith("'Fira"))
    expect(families, 'text set in a face other than Fira').toEqual([])
    expect(svg).not.toMatch(/Open Sans|Helvetica|Arial/)
    writeFileSync(path.join(RESULTS_DIR, 'figure-export.svg'), svg)

    // PNG: twice the file size in pixels, drawn from that SVG; shown in the page to look at it
    const pngFile = await save('Save as PNG')
    expect(pngFile.name).toMatch(/\.png$/)
    expect(pngFile.bytes.subarray(1, 4).toString('latin1')).toBe('PNG')
    expect([pngFile.bytes.readUInt32BE(16), pngFile.bytes.readUInt32BE(20)]).toEqual([1800, 1120])
    writeFileSync(path.join(RESULTS_DIR, 'figure-export.png'), pngFile.bytes)

    // CSV: a header naming each trace with its axis, then rows of numbers
    const csvFile = await save('Save as CSV')
    expect(csvFile.name).toMatch(/\.csv$/)
    const lines = csvFile.bytes.toString('utf8').trim().split('\r\n')
    expect(lines.length).toBeGreaterThan(10)
    expect(lines[0]).toMatch(/ · /)
    const columns = lines[0].split(',').length
    expect(lines[1].split(',').length).toBe(columns)
    expect(lines[1].split(',').filter((v) => v !== '').every((v) => Number.isFinite(Number(v)))).toBe(true)
  }, 300_000)
})
