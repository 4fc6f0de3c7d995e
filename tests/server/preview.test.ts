/**
 * A sheet's first view in the page the server sends for /sheets/:id (server/preview.ts): members get the cards as
 * escaped plain text in a page nobody caches; everyone else gets the plain page, with nothing of the sheet in it.
 */
import { afterAll, describe, expect, it } from 'vitest'
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import request from 'supertest'
import { CALLERS, call, makeTestApp, seedLab } from '../utils/server'
import { PREVIEW_MARKER, sheetPreviewHtml } from '../../server/preview'

const dist = mkdtempSync(path.join(tmpdir(), 'penumbra-dist-'))
mkdirSync(path.join(dist, 'assets'))
writeFileSync(path.join(dist, 'index.html'), `<!doctype html><title>Penumbra</title><div id="app"></div>${PREVIEW_MARKER}<script type="module" src="/assets/main.js"></script>`)
afterAll(() => rmSync(dist, { recursive: true, force: true }))

const FILE = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Edge <b>model</b> of film B',
  cells: [
    { id: 'p1', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
    { id: 'p2', kind: 'parameter', name: 'B', value: 4.2e9, unit: 'eV/cm^2' },
    { id: 'f1', kind: 'formula', name: 'lambda_g', source: 'photon_wavelength(Eg) // costs $& and $1', unit: 'um' },
    { id: 'n1', kind: 'note', text: '## Aim\n<script>alert(1)</script><img src=x onerror=alert(2)>' },
    { id: 'g1', kind: 'figure', title: 'Edge', traces: [{ x: 'E', y: 'alpha', label: 'α model' }] },
  ],
}

async function setUp() {
  const t = await makeTestApp({ config: { clientDir: dist } })
  const lab = await seedLab(t)
  const made = await call(t, lab.users.editor.cookie).post(`/api/labs/${lab.labId}/sheets`, FILE)
  expect(made.status).toBe(201)
  return { t, lab, sheetId: made.body.id as string }
}

function page(t: Awaited<ReturnType<typeof setUp>>['t'], url: string, cookie: string) {
  const r = request(t.app).get(url).set('Accept', 'text/html')
  return cookie ? r.set('Cookie', cookie) : r
}

describe('the first view of a sheet in its page', () => {
  it('shows members the cards, escaped, in a page that is never cached', async () => {
    const { t, lab, sheetId } = await setUp()
    for (const role of ['owner', 'editor', 'reviewer', 'viewer'] as const) {
      const res = await page(t, `/sheets/${sheetId}`, lab.users[role].cookie)
      expect(res.status).toBe(200)
      expect(res.headers['cache-control']).toBe('no-store')
      expect(res.headers.vary).toMatch(/Cookie/)
      expect(res.text).toContain(`data-sheet-id="${sheetId}"`)
      expect(res.text).not.toContain(PREVIEW_MARKER)
      // the page's own script still follows the first view
      expect(res.text.indexOf('pn-preview')).toBeLessThan(res.text.indexOf('/assets/main.js'))
    }
    const html = (await page(t, `/sheets/${sheetId}`, lab.users.viewer.cookie)).text
    expect(html).toContain('Edge &lt;b&gt;model&lt;/b&gt; of film B')
    expect(html).toMatch(/pn-preview-name pn-mono">Eg<\/span>[\s\S]*1\.48 eV/)
    // values and units as the live cards show them
    expect(html).toContain('4.2e9 eV/cm²')
    expect(html).toContain('[µm]')
    // replacement patterns in the sheet's text stay as written
    expect(html).toContain('photon_wavelength(Eg) // costs $&amp; and $1')
    expect(html).toContain('<strong>Aim</strong>')
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;&lt;img src=x onerror=alert(2)&gt;')
    expect(html).not.toMatch(/<script>alert|<img/)
    expect(html).toContain('Plots α model')
    // a trailing slash is the same page
    expect((await page(t, `/sheets/${sheetId}/`, lab.users.viewer.cookie)).text).toContain('pn-preview-card')
  })

  it('gives everyone else the plain page, with nothing of the sheet', async () => {
    const { t, lab, sheetId } = await setUp()
    for (const caller of CALLERS.filter((c) => c === 'outsider' || c === 'anonymous')) {
      const res = await page(t, `/sheets/${sheetId}`, lab.cookie(caller))
      expect(res.status).toBe(200)
      expect(res.headers['cache-control']).toBe('no-cache')
      expect(res.text).not.toContain('id="pn-preview"')
      expect(res.text).not.toContain('lambda_g')
      expect(res.text).toContain('<div id="app">')
    }
    // other pages of the sheet, unknown sheets and broken addresses get the plain page too
    for (const url of [`/sheets/${sheetId}/snapshots`, '/sheets/no-such-sheet', '/labs']) {
      const res = await page(t, url, lab.users.owner.cookie)
      expect(res.status).toBe(200)
      expect(res.text).not.toContain('pn-preview-card')
    }
    const broken = await page(t, '/sheets/%E0%A4%A', lab.users.owner.cookie)
    expect(broken.status).toBe(400)
    expect(broken.text).not.toContain('pn-preview-card')
    // a forged or expired cookie is a signed-out visitor
    const forged = await page(t, `/sheets/${sheetId}`, 'penumbra_session=forged.token.here')
    expect(forged.status).toBe(200)
    expect(forged.text).not.toContain('id="pn-preview"')
  })

  it('follows the sheet as it changes, and says how many cards it leaves to the live page', async () => {
    const { t, lab, sheetId } = await setUp()
    await call(t, lab.users.owner.cookie).patch(`/api/sheets/${sheetId}`, { title: 'Renamed study' })
    expect((await page(t, `/sheets/${sheetId}`, lab.users.owner.cookie)).text).toContain('Renamed study')
    const many = {
      format: 'penumbra.sheet' as const,
      version: 1 as const,
      title: 'Long',
      cells: Array.from({ length: 45 }, (_, i) => ({ kind: 'parameter' as const, name: `p${i}`, value: i })),
    }
    const html = sheetPreviewHtml('s1', many)
    expect(html.match(/pn-preview-card/g)).toHaveLength(40)
    expect(html).toContain('and 5 more cells')
    expect(sheetPreviewHtml('s2', { ...many, cells: [] })).toContain('This sheet has no cells yet.')
  })
})
