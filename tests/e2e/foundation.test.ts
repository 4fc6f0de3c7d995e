/**
 * The web foundation end to end, in headless Chromium against the built app and the real server: the demo owner
 * signs in, opens the lab, creates a sheet and invites a new person by e-mail; the invitation is read from the
 * developer mailbox and accepted in a second, independent browser by someone who has no account yet; the new member's
 * role shows (a viewer gets no edit controls, and the server refuses a viewer's write); the owner makes them an
 * editor and they can then create a sheet.
 */
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO, DEMO_LAB, signIn, useBrowserSuite, waitForMail } from '../utils/browser'

const e2e = useBrowserSuite()

/** A fictional newcomer (invented name and address). */
const NEWCOMER = { name: 'Noor Lindqvist', email: 'noor.lindqvist@halvorsen-lab.example', password: 'absorber-edge-2026' }

async function chooseOption(page: Page, text: string) {
  await page.locator('.el-select-dropdown__item:visible').filter({ hasText: new RegExp(`^\\s*${text}`) }).first().click()
}

describe('the web foundation in a browser', () => {
  it('signs in, creates a sheet, invites by e-mail, accepts as a new user and applies the role', async () => {
    const base = e2e.server.url
    const owner = await e2e.newBrowser({ label: 'owner' })
    const page = owner.page

    // the demo owner signs in and opens the lab
    await signIn(page, base, DEMO.owner)
    await expect.poll(() => new URL(page.url()).pathname).toBe('/labs')
    await page.getByRole('link', { name: new RegExp(DEMO_LAB) }).first().click()
    await page.waitForURL(/\/labs\/[^/]+$/)
    const labPath = new URL(page.url()).pathname
    await expect.poll(() => page.getByTestId('lab-name').textContent()).toBe(DEMO_LAB)
    await expect.poll(() => page.getByTestId('my-role').textContent()).toBe('Owner')

    // create a sheet: it opens, and it is listed in the lab
    const title = 'Film D absorption edge, first look'
    await page.getByTestId('new-sheet').click()
    await page.getByRole('dialog', { name: 'New sheet' }).getByLabel('Title').fill(title)
    await page.getByRole('button', { name: 'Create sheet' }).click()
    await page.waitForURL(/\/sheets\/[^/]+$/)
    await page.goto(base + labPath)
    await expect.poll(() => page.getByTestId('sheets-table').getByRole('link', { name: title }).count()).toBe(1)

    // invite a new person as a viewer
    await page.getByRole('tab', { name: /Members/ }).click()
    await page.getByTestId('invite').click()
    const dialog = page.getByRole('dialog', { name: /Invite someone/ })
    await dialog.getByLabel('E-mail address').fill('not an address')
    await dialog.getByRole('button', { name: 'Send invitation' }).click()
    await expect.poll(() => dialog.getByText('Enter an e-mail address such as name@example.org.').count()).toBe(1)
    await dialog.getByLabel('E-mail address').fill(NEWCOMER.email)
    await dialog.getByTestId('invite-role').click()
    await chooseOption(page, 'Viewer')
    await dialog.getByRole('button', { name: 'Send invitation' }).click()
    await expect.poll(() => page.getByTestId('invitations-table').getByText(NEWCOMER.email).count()).toBe(1)

    // the invitation arrives in the developer mailbox with its accept link
    const mail = await waitForMail(base, NEWCOMER.email, /invit/i)
    const link = mail.links.find((l) => /\/invitations\/[^/\s]+$/.test(l))
    expect(link, `an accept link in: ${mail.links.join(', ')}`).toBeTruthy()
    const acceptPath = new URL(link!).pathname

    // a second, independent browser: no account yet, so the page offers to create one on the way
    const newcomer = await e2e.newBrowser({ label: 'newcomer' })
    const np = newcomer.page
    await np.goto(base + acceptPath)
    await expect.poll(() => np.getByRole('heading', { name: `Join ${DEMO_LAB}` }).count()).toBe(1)
    await np.getByLabel('Name').fill(NEWCOMER.name)
    await np.getByLabel('Password', { exact: true }).fill(NEWCOMER.password)
    await np.getByLabel('Password again').fill(NEWCOMER.password)
    await np.getByRole('button', { name: 'Create account and join' }).click()
    await np.waitForURL((u) => u.pathname === labPath)

    // as a viewer: the role shows, no edit controls, and the server refuses a write all the same
    await expect.poll(() => np.getByTestId('my-role').textContent()).toBe('Viewer')
    await expect.poll(() => np.getByTestId('read-only-note').count()).toBe(1)
    expect(await np.getByTestId('new-sheet').count()).toBe(0)
    expect(await np.getByRole('button', { name: 'Import a sheet file' }).count()).toBe(0)
    expect(await np.getByRole('button', { name: 'Rename' }).count()).toBe(0)
    expect(await np.getByRole('button', { name: 'Delete' }).count()).toBe(0)
    expect(await np.getByTestId('sheets-table').getByRole('link', { name: title }).count()).toBe(1)
    const labId = labPath.split('/').pop()!
    const refused = await np.evaluate(async (id) => {
      const res = await fetch(`/api/labs/${id}/sheets`, {
        method: 'POST',
        headers: { 'Content-Type': 'application/json', 'X-Penumbra-Request': '1' },
        body: JSON.stringify({ title: 'should not exist' }),
      })
      return res.status
    }, labId)
    expect(refused).toBe(403)

    // the invitation link works once
    const again = await e2e.newBrowser({ label: 'reuse' })
    await again.page.goto(base + acceptPath)
    await expect.poll(() => again.page.getByRole('heading', { name: /expired|not known/ }).count()).toBe(1)
    await again.close()

    // the owner sees the new member and makes them an editor
    await page.reload()
    const row = page.getByTestId('members-table').locator('tr', { hasText: NEWCOMER.email })
    await expect.poll(() => row.count()).toBe(1)
    await row.locator('.el-select').click()
    await chooseOption(page, 'Editor')
    await expect.poll(() => page.getByText(`${NEWCOMER.name} is now an editor`).count()).toBeGreaterThan(0)

    // the new member, now an editor, can create a sheet
    await np.reload()
    await expect.poll(() => np.getByTestId('my-role').textContent()).toBe('Editor')
    await np.getByTestId('new-sheet').click()
    await np.getByRole('dialog', { name: 'New sheet' }).getByLabel('Title').fill('Noor: thickness check')
    await np.getByRole('button', { name: 'Create sheet' }).click()
    await np.waitForURL(/\/sheets\/[^/]+$/)
    await np.goto(base + labPath)
    await expect.poll(() => np.getByTestId('sheets-table').getByRole('link', { name: 'Noor: thickness check' }).count()).toBe(1)
  })
})
