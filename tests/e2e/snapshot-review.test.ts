/**
 * The review path in three headless Chromium browsers against the built app and the real server: the editor
 * freezes a sheet and asks for a review; the reviewer compares it with the previous snapshot, comments on a cell
 * and asks for changes; the editor answers, edits, freezes again and the reviewer approves; the owner makes a guest
 * link, a signed-out browser opens it and sees the figure, then sees that it was revoked once the owner revokes it.
 */
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, signIn, useBrowserSuite } from '../utils/browser'
import { card, demoLabId, sheetPage } from '../utils/sheetPage'

const e2e = useBrowserSuite()
const { createSheet, openLive } = sheetPage(() => e2e.server)

/** An invented edge model of the Halvorsen lab's film K-2 (demo scenario, not measured data). */
const CELLS = [
  { kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV', min: 1, max: 2 },
  { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 121)', unit: 'eV' },
  { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 4e9*eV/cm^2)', unit: '1/cm' },
  { kind: 'figure', name: 'fig_alpha', traces: [{ x: 'E', y: 'alpha' }] },
]

async function setParameter(page: Page, name: string, value: string): Promise<void> {
  const input = card(page, name).getByLabel('Value')
  await input.click()
  await input.fill(value)
  await input.press('Enter')
  await expect.poll(() => input.inputValue()).toBe(value)
}

/** Freezes the open live sheet through its button; resolves on the new snapshot's page with its path. */
async function freeze(page: Page, message: string): Promise<string> {
  await page.getByTestId('freeze').click()
  const dialog = page.getByRole('dialog', { name: 'Freeze a snapshot' })
  await dialog.getByLabel('Snapshot message').fill(message)
  await dialog.getByRole('button', { name: 'Freeze', exact: true }).click()
  await page.waitForURL(/\/snapshots\/[^/]+$/, { timeout: 20_000 })
  await expect.poll(() => page.getByTestId('snapshot-message').textContent()).toContain(message)
  return new URL(page.url()).pathname
}

/** Clicks a card's CSV button; resolves with the downloaded file's name and its lines. */
async function cardCsv(page: Page, name: string): Promise<{ file: string; lines: string[] }> {
  const [download] = await Promise.all([page.waitForEvent('download', { timeout: 30_000 }), card(page, name).getByTestId('download-csv').click()])
  const path = await download.path()
  return { file: download.suggestedFilename(), lines: readFileSync(path, 'utf8').trim().split(/\r?\n/) }
}

async function askForReview(page: Page, reviewer: string, note: string): Promise<void> {
  await page.getByTestId('request-review').click()
  const dialog = page.getByRole('dialog', { name: 'Ask for a review' })
  await dialog.getByTestId('reviewer-select').click()
  await page.getByRole('option', { name: new RegExp(reviewer) }).click()
  await dialog.getByLabel('Note to the reviewers').fill(note)
  await dialog.getByRole('button', { name: 'Ask for review' }).click()
  await expect.poll(() => page.getByTestId('review-state').first().textContent(), { timeout: 15_000 }).toBe('open')
}

async function decide(page: Page, snapshotPath: string, button: 'Approve' | 'Request changes', note: string): Promise<void> {
  await page.goto(`${e2e.server.url}${snapshotPath}`)
  const decide = page.getByTestId('decide').first()
  await decide.getByLabel('Decision note').fill(note)
  await decide.getByRole('button', { name: button }).click()
  await expect.poll(() => page.getByTestId('review-state').first().textContent(), { timeout: 15_000 }).toBe(button === 'Approve' ? 'approved' : 'changes-requested')
}

describe('snapshots, review and guest links in the browser', () => {
  it('goes from freezing through review, answer, approval and a guest link to its revocation', { timeout: 240_000 }, async () => {
    const editor = await e2e.newBrowser({ label: 'editor' })
    await signIn(editor.page, e2e.server.url, DEMO.editor)
    const sheetId = await createSheet(editor.page, 'Film K-2 edge', CELLS)
    await openLive(editor.page, sheetId)

    // a baseline snapshot, then an edit, then the snapshot sent for review
    await freeze(editor.page, 'as grown')
    await openLive(editor.page, sheetId)
    await setParameter(editor.page, 'Eg', '1.55')
    const first = await freeze(editor.page, 'after the 450 °C anneal')
    await askForReview(editor.page, DEMO.reviewer.name, 'Is the gap shift plausible?')

    // the reviewer finds it in the queue, compares with the previous snapshot, comments and asks for changes
    const reviewer = await e2e.newBrowser({ label: 'reviewer' })
    await signIn(reviewer.page, e2e.server.url, DEMO.reviewer)
    await reviewer.page.goto(`${e2e.server.url}${first}`)
    await reviewer.page.getByTestId('compare-previous').click()
    await reviewer.page.waitForURL(/\/compare\//)
    const params = reviewer.page.getByTestId('changed-parameters')
    await expect.poll(() => params.textContent(), { timeout: 20_000 }).toContain('Eg')
    expect(await params.textContent()).toMatch(/1\.5\b[\s\S]*1\.55/)
    await expect.poll(() => reviewer.page.getByTestId('overlay-figure').count()).toBe(1)

    await reviewer.page.goto(`${e2e.server.url}${first}`)
    await card(reviewer.page, 'Eg').getByTestId('comment-badge').click()
    await reviewer.page.getByLabel('New comment').fill('The anneal should not move Eg this far; check the window.')
    await reviewer.page.getByRole('button', { name: 'Comment', exact: true }).click()
    await expect.poll(() => reviewer.page.getByTestId('comment-thread').count()).toBe(1)
    await reviewer.page.keyboard.press('Escape')
    await decide(reviewer.page, first, 'Request changes', 'Please recheck Eg.')

    // the editor sees the thread on the live sheet (made on an older version), answers, edits and freezes again
    await openLive(editor.page, sheetId)
    await card(editor.page, 'Eg').getByTestId('comment-badge').click()
    const thread = editor.page.getByTestId('comment-thread').first()
    await expect.poll(() => thread.textContent(), { timeout: 15_000 }).toContain('older version')
    await thread.getByLabel('Reply').fill('Fixed: the gap is 1.52 eV with the corrected window.')
    await thread.getByRole('button', { name: 'Reply' }).click()
    await expect.poll(() => thread.textContent()).toContain('Fixed: the gap')
    await editor.page.keyboard.press('Escape')
    await setParameter(editor.page, 'Eg', '1.52')
    const second = await freeze(editor.page, 'corrected window')
    // a decision binds to its snapshot: the new one starts unreviewed
    expect(await editor.page.getByTestId('snapshot-state').textContent()).toBe('not reviewed')
    // a card's CSV on the snapshot page is that cell's series from the stored results (121 grid points and a header)
    const grid = await cardCsv(editor.page, 'E')
    expect(grid.file).toBe('Film K-2 edge - E.csv')
    expect(grid.lines[0]).toBe('E (eV)')
    expect(grid.lines).toHaveLength(122)
    await askForReview(editor.page, DEMO.reviewer.name, 'Corrected as asked.')
    await decide(reviewer.page, second, 'Approve', 'Looks right now.')

    // the owner makes a guest link; a signed-out browser opens it and sees the figure
    const owner = await e2e.newBrowser({ label: 'owner' })
    await signIn(owner.page, e2e.server.url, DEMO.owner)
    await owner.page.goto(`${e2e.server.url}${second}`)
    await owner.page.getByTestId('guest-links').click()
    await owner.page.getByTestId('make-guest-link').click()
    const address = owner.page.getByLabel('Guest link address') // Element Plus puts the attributes on the input itself
    await expect.poll(() => address.inputValue(), { timeout: 15_000 }).toMatch(/\/guest\//)
    const guestPath = new URL(await address.inputValue()).pathname

    const guest = await e2e.newBrowser({ label: 'guest' })
    await guest.page.goto(`${e2e.server.url}${guestPath}`)
    await expect.poll(() => guest.page.getByTestId('snapshot-message').textContent(), { timeout: 20_000 }).toContain('corrected window')
    await expect.poll(() => card(guest.page, 'fig_alpha').locator('.js-plotly-plot').count(), { timeout: 30_000 }).toBe(1)
    expect(await guest.page.getByText('Film K-2 edge').count()).toBeGreaterThan(0)
    // the guest downloads a card's series through the link: alpha on the grid its figure draws it against
    const alpha = await cardCsv(guest.page, 'alpha')
    expect(alpha.file).toBe('Film K-2 edge - alpha.csv')
    expect(alpha.lines[0]).toBe('E (eV),alpha (1/cm)')
    expect(alpha.lines).toHaveLength(122)

    await owner.page.getByRole('button', { name: 'Revoke' }).click()
    await owner.page.getByRole('dialog', { name: 'Revoke guest link' }).getByRole('button', { name: 'Revoke' }).click()
    await expect.poll(() => owner.page.getByTestId('guest-link-state').first().textContent(), { timeout: 15_000 }).toBe('revoked')
    await guest.page.reload()
    await expect.poll(() => guest.page.getByTestId('guest-gone').textContent(), { timeout: 15_000 }).toContain('revoked')
  })

  it('prints the review report of a demo snapshot with every figure drawn, without scrolling to them first', async () => {
    const base = e2e.server.url
    const owner = await e2e.newBrowser({ label: 'owner' })
    await signIn(owner.page, base, DEMO.owner)
    const labId = await demoLabId(owner.page, base)
    const sheets = (await (await owner.page.request.get(`${base}/api/labs/${labId}/sheets`)).json()) as { sheets: { id: string; title: string }[] }
    const sheet = sheets.sheets.find((x) => x.title.startsWith('Film H-17'))!
    const snaps = (await (await owner.page.request.get(`${base}/api/sheets/${sheet.id}/snapshots`)).json()) as { snapshots: { id: string; hash: string }[] }
    expect(snaps.snapshots.length).toBeGreaterThan(0)
    const snap = snaps.snapshots[0]
    await owner.page.goto(`${base}/sheets/${sheet.id}/snapshots/${snap.id}/report`)
    const report = owner.page.locator('.report')
    await expect.poll(() => report.locator('h1').count(), { timeout: 20_000 }).toBe(1)
    expect(await report.innerText()).toContain(snap.hash)
    // every figure of the report draws at once, however far down the page it sits
    const figures = report.locator('figure.figure')
    const n = await figures.count()
    expect(n).toBeGreaterThan(0)
    await expect.poll(() => report.locator('figure.figure .main-svg').count(), { timeout: 60_000 }).toBeGreaterThanOrEqual(n)
    expect(await report.getByText('Loading the charting library').count()).toBe(0)
    // printed: the page's own toolbar is left out, and the PDF holds pages
    await owner.page.emulateMedia({ media: 'print' })
    expect(await report.locator('.no-print').first().isVisible()).toBe(false)
    const pdf = await owner.page.pdf({ format: 'A4' })
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-')
    expect(pdf.length).toBeGreaterThan(20_000)
  })
})
