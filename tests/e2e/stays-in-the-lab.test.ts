/**
 * Nothing leaves the lab: every page, as each role of the demo lab and as a signed-out visitor, makes no request to
 * another origin and carries no link, form action, frame, image, script or stylesheet pointing at one. Sheet pages are
 * scrolled to the end so every figure is drawn (the charting library must not fetch anything either). Invitation,
 * confirmation and reset pages are visited with real tokens from the developer mailbox.
 */
import { describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import { DEMO, DEMO_LAB, readMailbox, signIn, useBrowserSuite, waitForMail } from '../utils/browser'
import { CSRF_HEADER } from '../../shared/schema/api'

const e2e = useBrowserSuite()

/** Every URL the page's DOM points at: links, form actions, frames, images, scripts, stylesheets, media, objects. */
async function pointers(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const out: string[] = []
    const take = (sel: string, attr: string) =>
      document.querySelectorAll(sel).forEach((el) => {
        const v = el.getAttribute(attr)
        if (v !== null && v !== '') out.push(`${el.tagName.toLowerCase()}[${attr}] ${new URL(v, document.baseURI).href}`)
      })
    take('a[href], area[href]', 'href')
    take('form[action]', 'action')
    take('button[formaction], input[formaction]', 'formaction')
    take('iframe[src], frame[src], embed[src], script[src], img[src], source[src], video[src], audio[src], track[src]', 'src')
    take('object[data]', 'data')
    take('link[href]', 'href')
    take('img[srcset], source[srcset]', 'srcset')
    // SVG links (plotly draws its own) use href or xlink:href
    document.querySelectorAll('svg a, svg image, svg use').forEach((el) => {
      const v = el.getAttribute('href') ?? el.getAttribute('xlink:href')
      if (v && !v.startsWith('#')) out.push(`svg ${el.tagName.toLowerCase()} ${new URL(v, document.baseURI).href}`)
    })
    return out
  })
}

/** Origins other than ours among pointers and requests (data:, blob: and about: are the page's own). */
function outside(urls: readonly string[], origin: string): string[] {
  return urls.filter((entry) => {
    const url = entry.slice(entry.lastIndexOf(' ') + 1)
    if (/^(data|blob|about):/.test(url)) return false
    try {
      const u = new URL(url)
      return u.origin !== origin && !(u.protocol === 'ws:' && `http://${u.host}` === origin)
    } catch {
      return true
    }
  })
}

/** Watches every request of a browser context (pages, workers, websockets, service worker). */
function recordRequests(context: BrowserContext): string[] {
  const seen: string[] = []
  context.on('request', (r) => seen.push(`request ${r.url()}`))
  context.on('page', (p) => p.on('websocket', (ws) => seen.push(`websocket ${ws.url()}`)))
  for (const p of context.pages()) p.on('websocket', (ws) => seen.push(`websocket ${ws.url()}`))
  return seen
}

async function visit(page: Page, url: string, scroll: boolean): Promise<void> {
  await page.goto(url)
  await page.waitForLoadState('load')
  // the app has rendered something of its own
  await expect.poll(() => page.locator('body *').count(), { timeout: 15_000 }).toBeGreaterThan(0)
  if (scroll) {
    // a sheet's or snapshot's cards, a comparison's figures, a report
    await expect.poll(() => page.locator('.pn-cell, .pn-plot, .report h1').count(), { timeout: 30_000 }).toBeGreaterThan(0)
    // every card built, then every figure brought near the viewport so it draws
    for (let i = 0; i < 12; i++) {
      await page.mouse.wheel(0, 2500)
      await page.waitForTimeout(250)
    }
    const plots = await page.locator('.pn-plot .plot').count()
    if (plots > 0) await expect.poll(() => page.locator('.pn-plot .main-svg').count(), { timeout: 30_000 }).toBeGreaterThan(0)
  }
  await page.waitForTimeout(500)
}

async function check(label: string, page: Page, requests: string[], pages: { path: string; scroll?: boolean }[]): Promise<void> {
  const origin = e2e.server.url
  for (const { path, scroll } of pages) {
    const from = requests.length
    await visit(page, `${origin}${path}`, !!scroll)
    const found = [...outside(await pointers(page), origin), ...outside(requests.slice(from), origin)]
    expect(found, `${label} on ${path} points outside the app`).toEqual([])
  }
}

describe('no page leads outside the app', () => {
  it('visits every page signed out and as owner, editor, reviewer and viewer, and finds nothing pointing at another origin', async () => {
    const base = e2e.server.url

    // real tokens: an invitation (owner invites), a sign-up confirmation and a password reset, read from the mailbox
    const setup = await e2e.newBrowser({ label: 'setup' })
    await signIn(setup.page, base, DEMO.owner)
    const labs = (await (await setup.page.request.get(`${base}/api/labs`)).json()) as { labs: { id: string; name: string }[] }
    const labId = labs.labs.find((l) => l.name === DEMO_LAB)!.id
    const sheets = ((await (await setup.page.request.get(`${base}/api/labs/${labId}/sheets`)).json()) as { sheets: { id: string }[] }).sheets
    expect(sheets.length).toBeGreaterThan(0)
    const guest = 'outside-check@elsewhere.example'
    const post = async (path: string, data: object) => {
      const res = await setup.page.request.post(`${base}${path}`, { data, headers: { [CSRF_HEADER]: '1' } })
      expect(res.status(), `${path}: ${await res.text()}`).toBeLessThan(300)
    }
    await post(`/api/labs/${labId}/invitations`, { email: guest, role: 'viewer' })
    await post('/api/auth/sign-up', { email: 'newcomer-check@elsewhere.example', name: 'Newcomer', password: 'a long enough password 1' })
    await post('/api/auth/reset-request', { email: DEMO.viewer.email })
    const pathOf = async (to: string, match: RegExp, route: RegExp) => {
      const mail = await waitForMail(base, to, match)
      const link = mail.links.find((l) => route.test(new URL(l).pathname))
      expect(link, `a link in the mail to ${to}`).toBeTruthy()
      return new URL(link!).pathname
    }
    const invitation = await pathOf(guest, /invit/i, /^\/invitations\//)
    const confirm = await pathOf('newcomer-check@elsewhere.example', /./, /^\/confirm\//)
    const reset = await pathOf(DEMO.viewer.email, /./, /^\/reset\//)
    expect((await readMailbox(base)).length).toBeGreaterThan(0)

    // the review side: a seeded snapshot of a demo sheet (its timeline, page, comparison with the live sheet and with
    // an earlier snapshot, printable report) and a guest link made to it now
    let snapshotPages: { path: string; scroll?: boolean }[] = []
    let guestLink = ''
    for (const s of sheets) {
      const snaps = ((await (await setup.page.request.get(`${base}/api/sheets/${s.id}/snapshots`)).json()) as { snapshots: { id: string }[] }).snapshots
      if (snaps.length === 0) continue
      const [newest, older] = snaps
      snapshotPages = [
        { path: `/sheets/${s.id}/snapshots` },
        { path: `/sheets/${s.id}/snapshots/${newest.id}`, scroll: true },
        { path: `/sheets/${s.id}/snapshots/${newest.id}/compare/live`, scroll: true },
        ...(older ? [{ path: `/sheets/${s.id}/snapshots/${newest.id}/compare/${older.id}`, scroll: true }] : []),
        { path: `/sheets/${s.id}/snapshots/${newest.id}/report`, scroll: true },
      ]
      const res = await setup.page.request.post(`${base}/api/snapshots/${newest.id}/guest-links`, { data: { expiresInDays: 7, note: 'outside check' }, headers: { [CSRF_HEADER]: '1' } })
      expect(res.status(), await res.text()).toBe(201)
      guestLink = new URL(((await res.json()) as { url: string }).url, base).pathname
      break
    }
    expect(snapshotPages.length, 'a demo sheet with a snapshot').toBeGreaterThan(0)

    const open = [
      { path: '/sign-in' },
      { path: '/sign-up' },
      { path: '/reset' },
      { path: reset },
      { path: confirm },
      { path: invitation },
      { path: guestLink, scroll: true },
      { path: '/help' },
      { path: '/dev/mail' },
      { path: '/no-such-page' },
    ]
    const visitor = await e2e.newBrowser({ label: 'signed-out' })
    await check('a signed-out visitor', visitor.page, recordRequests(visitor.context), open)

    for (const role of ['owner', 'editor', 'reviewer', 'viewer'] as const) {
      const b = await e2e.newBrowser({ label: role })
      const requests = recordRequests(b.context)
      await signIn(b.page, base, DEMO[role])
      await check(`the ${role}`, b.page, requests, [
        { path: '/labs' },
        { path: `/labs/${labId}` },
        ...sheets.map((s) => ({ path: `/sheets/${s.id}`, scroll: true })),
        { path: `/labs/${labId}/reviews` },
        ...snapshotPages,
        { path: '/profile' },
        { path: '/help' },
        { path: invitation },
        { path: '/dev/mail' },
        { path: '/no-such-page' },
      ])
      await b.close()
    }
  }, 900_000)

  it('asks who is signed in without a failed request, so a signed-out visitor’s pages log no console error', async () => {
    const base = e2e.server.url
    const visitor = await e2e.newBrowser({ label: 'signed-out' })
    const answers: string[] = []
    visitor.page.on('response', (res) => {
      if (new URL(res.url()).pathname === '/api/auth/me') answers.push(String(res.status()))
    })
    for (const path of ['/', '/sign-in', '/sign-up', '/reset', '/help', '/labs', '/no-such-page']) await visit(visitor.page, `${base}${path}`, false)
    // the app asked (otherwise this test would prove nothing) and was told "nobody", not refused
    expect(answers.length).toBeGreaterThan(0)
    expect(new Set(answers)).toEqual(new Set(['200']))
    await expect.poll(() => visitor.page.getByRole('button', { name: 'Sign in' }).count()).toBeGreaterThan(0)
    expect(visitor.problems).toEqual([])

    // signed in, then out again: the pages after it log nothing either
    await signIn(visitor.page, base, DEMO.viewer)
    await visit(visitor.page, `${base}/labs`, false)
    expect((await visitor.page.request.post(`${base}/api/auth/sign-out`, { data: {}, headers: { [CSRF_HEADER]: '1' } })).status()).toBe(204)
    const before = answers.length
    await visit(visitor.page, `${base}/labs`, false)
    await expect.poll(() => new URL(visitor.page.url()).pathname).toBe('/sign-in')
    expect(answers.slice(before)).toContain('200')
    expect(visitor.problems).toEqual([])
  })
})
