/**
 * The live sheet in two headless Chromium browsers against the built app and the real server: the demo editor and
 * the demo reviewer open the same demo sheet; the editor drags a parameter slider and the figure that depends on it
 * changes in both browsers; the reviewer's formula editor is not editable and typing into it changes nothing,
 * neither there nor for the editor. Screenshots of both browsers are saved to test-results/ when a step fails.
 */
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, DEMO_LAB, signIn, useBrowserSuite } from '../utils/browser'
import { card, formulaText } from '../utils/sheetPage'

const e2e = useBrowserSuite()

/** The demo edge-model sheet (examples/edge-model.penumbra.json): Eg drives the model α drawn in fig_alpha. */
const SHEET_TITLE = /band-edge model/
const PARAMETER = 'Eg'
const FIGURE = 'fig_alpha'
const FORMULA = 'alpha'

async function findSheet(page: Page, base: string): Promise<string> {
  const labs = (await (await page.request.get(`${base}/api/labs`)).json()) as { labs: { id: string; name: string }[] }
  const lab = labs.labs.find((l) => l.name === DEMO_LAB)
  if (!lab) throw new Error(`the editor is not in "${DEMO_LAB}"; labs: ${labs.labs.map((l) => l.name).join(', ')}`)
  const sheets = (await (await page.request.get(`${base}/api/labs/${lab.id}/sheets`)).json()) as { sheets: { id: string; title: string }[] }
  const sheet = sheets.sheets.find((s) => SHEET_TITLE.test(s.title))
  if (!sheet) throw new Error(`no demo sheet matching ${SHEET_TITLE}; sheets: ${sheets.sheets.map((s) => s.title).join(', ')}`)
  return sheet.id
}

/**
 * What a figure currently draws: Plotly keeps the traces on its graph div (`gd.data`), so the y values of every
 * trace, rounded, identify the picture. Empty until the figure has drawn.
 */
async function figureSignature(page: Page, name: string): Promise<string> {
  return card(page, name).evaluate((el) => {
    const gd = el.querySelector('.js-plotly-plot') as (HTMLElement & { data?: { y?: ArrayLike<number> }[] }) | null
    if (!gd || !Array.isArray(gd.data) || gd.data.length === 0) return ''
    return JSON.stringify(gd.data.map((t) => Array.from(t.y ?? [], (v) => (typeof v === 'number' ? Number(v.toPrecision(6)) : null))))
  })
}

async function parameterValue(page: Page, name: string): Promise<string> {
  return card(page, name).getByLabel('Value').inputValue()
}

/** Drags a parameter's slider handle by `dx` pixels in ten small moves, as a hand does. */
async function dragSlider(page: Page, name: string, dx: number): Promise<void> {
  const handle = card(page, name).locator('.el-slider__button-wrapper')
  await handle.scrollIntoViewIfNeeded()
  const box = await handle.boundingBox()
  if (!box) throw new Error(`the slider handle of ${name} is not visible`)
  const x = box.x + box.width / 2
  const y = box.y + box.height / 2
  await page.mouse.move(x, y)
  await page.mouse.down()
  for (let i = 1; i <= 10; i++) await page.mouse.move(x + (i * dx) / 10, y, { steps: 2 })
  await page.mouse.up()
}

async function openLive(page: Page, base: string, sheetId: string): Promise<void> {
  await page.goto(`${base}/sheets/${sheetId}`)
  await expect.poll(() => page.getByTestId('connection').textContent(), { timeout: 20_000 }).toContain('Live')
  // figures draw when they come near the viewport, as a reader scrolls to them
  await card(page, FIGURE).scrollIntoViewIfNeeded()
  await expect.poll(() => figureSignature(page, FIGURE), { timeout: 30_000 }).not.toBe('')
}

describe('the live sheet in two browsers', () => {
  it('follows an editor dragging a parameter slider in both figures, and refuses the reviewer typing into a formula', async () => {
    const base = e2e.server.url
    const editor = await e2e.newBrowser({ label: 'editor' })
    const reviewer = await e2e.newBrowser({ label: 'reviewer' })
    await signIn(editor.page, base, DEMO.editor)
    await signIn(reviewer.page, base, DEMO.reviewer)
    const sheetId = await findSheet(editor.page, base)

    await openLive(editor.page, base, sheetId)
    await openLive(reviewer.page, base, sheetId)

    // each sees the other on the sheet
    await expect.poll(() => editor.page.getByTestId('people').getAttribute('aria-label'), { timeout: 15_000 }).toContain(DEMO.reviewer.name)
    await expect.poll(() => reviewer.page.getByTestId('people').getAttribute('aria-label'), { timeout: 15_000 }).toContain(DEMO.editor.name)
    await expect.poll(() => reviewer.page.getByTestId('readonly-note').isVisible()).toBe(true)

    const valueBefore = await parameterValue(editor.page, PARAMETER)
    expect(await parameterValue(reviewer.page, PARAMETER)).toBe(valueBefore)
    const editorFigureBefore = await figureSignature(editor.page, FIGURE)
    const reviewerFigureBefore = await figureSignature(reviewer.page, FIGURE)
    expect(reviewerFigureBefore).toBe(editorFigureBefore)

    // the editor drags the Eg slider to the right in small steps, as a hand does
    await dragSlider(editor.page, PARAMETER, 120)

    await expect.poll(() => parameterValue(editor.page, PARAMETER), { timeout: 10_000 }).not.toBe(valueBefore)
    const valueAfter = await parameterValue(editor.page, PARAMETER)
    expect(Number(valueAfter)).toBeGreaterThan(Number(valueBefore))
    await expect.poll(() => parameterValue(reviewer.page, PARAMETER), { timeout: 10_000 }).toBe(valueAfter)

    // the figure follows in both browsers, and both draw the same picture
    await expect.poll(() => figureSignature(editor.page, FIGURE), { timeout: 20_000 }).not.toBe(editorFigureBefore)
    await expect.poll(() => figureSignature(reviewer.page, FIGURE), { timeout: 20_000 }).not.toBe(reviewerFigureBefore)
    await expect.poll(async () => (await figureSignature(reviewer.page, FIGURE)) === (await figureSignature(editor.page, FIGURE)), { timeout: 20_000 }).toBe(true)

    // the reviewer cannot drag the slider nor type into a formula
    expect(await card(reviewer.page, PARAMETER).getByRole('slider').getAttribute('aria-disabled')).toBe('true')
    await dragSlider(reviewer.page, PARAMETER, -80)
    expect(await parameterValue(reviewer.page, PARAMETER)).toBe(valueAfter)
    const formula = card(reviewer.page, FORMULA).locator('.cm-content')
    expect(await formula.getAttribute('contenteditable')).toBe('false')
    const sourceBefore = await formulaText(editor.page, FORMULA)
    expect(await formulaText(reviewer.page, FORMULA)).toBe(sourceBefore)
    await formula.click()
    await reviewer.page.keyboard.press('End')
    await reviewer.page.keyboard.type(' * 2')
    await reviewer.page.keyboard.press('Backspace')
    expect(await formulaText(reviewer.page, FORMULA)).toBe(sourceBefore)
    // give a stray update time to travel before checking the editor's copy
    await editor.page.waitForTimeout(1000)
    expect(await formulaText(editor.page, FORMULA)).toBe(sourceBefore)
    expect(await parameterValue(editor.page, PARAMETER)).toBe(valueAfter)
  })
})
