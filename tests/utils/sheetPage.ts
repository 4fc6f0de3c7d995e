/**
 * Reading and driving the sheet page in browser tests: a card by cell name, the connection badge, a formula's text
 * and a cell's result line; creating a sheet in the demo lab through the API and opening it live.
 */
import { expect } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO_LAB } from './browser'

/** The card of the cell called `name`. */
export const card = (page: Page, name: string) => page.locator(`.pn-cell[data-cell-name="${name}"]`)

/** The connection badge's words ("Live", "Offline · 1 edit waiting on this device", …). */
export const connection = async (page: Page) => ((await page.getByTestId('connection').textContent()) ?? '').trim()

/** A formula's text as its editor shows it, without other people's caret labels. */
export async function formulaText(page: Page, name: string): Promise<string> {
  return card(page, name)
    .locator('.cm-content')
    .evaluate((el) => {
      const copy = el.cloneNode(true) as HTMLElement
      copy.querySelectorAll('.cm-ySelectionCaret').forEach((c) => c.remove())
      return [...copy.querySelectorAll('.cm-line')].map((l) => l.textContent ?? '').join('\n')
    })
}

/** The result line under a cell. */
export const resultText = (page: Page, name: string) => card(page, name).locator('.result').innerText()

/** The id of the demo lab, as the signed-in person of `page` sees it. */
export async function demoLabId(page: Page, base: string): Promise<string> {
  const labs = (await (await page.request.get(`${base}/api/labs`)).json()) as { labs: { id: string; name: string }[] }
  const lab = labs.labs.find((l) => l.name === DEMO_LAB)
  if (!lab) throw new Error(`not a member of "${DEMO_LAB}"`)
  return lab.id
}

/** Creates a sheet in the demo lab from a sheet file's cells (as the signed-in person) and returns its id. */
export async function createSheet(page: Page, base: string, title: string, cells: unknown[]): Promise<string> {
  const res = await page.request.post(`${base}/api/labs/${await demoLabId(page, base)}/sheets`, { data: { format: 'penumbra.sheet', version: 1, title, cells } })
  const body = (await res.json()) as { id?: string; error?: string }
  if (!res.ok() || !body.id) throw new Error(`creating "${title}" answered ${res.status()}: ${JSON.stringify(body)}`)
  return body.id
}

/** Opens a sheet and waits until its page is live. */
export async function openLive(page: Page, base: string, sheetId: string): Promise<void> {
  await page.goto(`${base}/sheets/${sheetId}`)
  await expect.poll(() => connection(page), { timeout: 20_000 }).toContain('Live')
}

/** `createSheet` and `openLive` bound to a test server's address. */
export function sheetPage(server: () => { url: string }) {
  return {
    createSheet: (page: Page, title: string, cells: unknown[]) => createSheet(page, server().url, title, cells),
    openLive: (page: Page, sheetId: string) => openLive(page, server().url, sheetId),
  }
}

/** Drops a text file on the sheet page the way a file manager does (dragover, then drop with the file). */
export async function dropFile(page: Page, name: string, text: string): Promise<void> {
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
