/** The demo seed and serving the built client. */
import { describe, expect, it, vi } from 'vitest'
import { mkdtempSync, mkdirSync, writeFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import request from 'supertest'
import { DEMO_ACCOUNTS, DEMO_LAB_NAME, EXAMPLES_DIR, formatDemoTable, isEmpty, readExamples, seedDemo } from '../../server/db/seed'
import { loadSheetFile } from '../../server/services/documents'
import { call, makeTestApp, signIn, TEST_ARGON2 } from '../utils/server'

describe('seedDemo', () => {
  it('creates the fictional lab with the four demo sign-ins in their roles and one sheet per example', async () => {
    const t = await makeTestApp()
    expect(await isEmpty(t.db)).toBe(true)
    const examples = readExamples(EXAMPLES_DIR, () => {})
    const result = await seedDemo({ db: t.db, config: { argon2: TEST_ARGON2 } })
    expect(await isEmpty(t.db)).toBe(false)
    expect(DEMO_ACCOUNTS.map((a) => [a.role, a.name, a.email, a.password])).toEqual([
      ['owner', 'Mira Halvorsen', 'mira@halvorsen-lab.example', 'demo-owner-2026'],
      ['editor', 'Tomás Reyes', 'tomas@halvorsen-lab.example', 'demo-editor-2026'],
      ['reviewer', 'Anil Varma', 'anil@varma-group.example', 'demo-reviewer-2026'],
      ['viewer', 'Lena Fischer', 'lena@halvorsen-lab.example', 'demo-viewer-2026'],
    ])
    for (const a of DEMO_ACCOUNTS) {
      const cookie = await signIn(t, a.email, a.password)
      const labs = (await call(t, cookie).get('/api/labs')).body.labs
      expect(labs).toEqual([expect.objectContaining({ name: DEMO_LAB_NAME, role: a.role })])
    }
    expect(result.sheets.map((s) => s.title)).toEqual(examples.map((e) => e.sheet.title))
    expect(result.sheets.length).toBeGreaterThan(0)
    for (const [i, s] of result.sheets.entries()) expect((await loadSheetFile(t.db, s.id)).cells.length).toBe(examples[i].sheet.cells.length)
  })

  it('skips an invalid example with a warning naming the problem, and warns when there are none', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'penumbra-examples-'))
    try {
      writeFileSync(path.join(dir, 'broken.penumbra.json'), JSON.stringify({ format: 'penumbra.sheet', version: 1, title: 'B', cells: [{ kind: 'parameter', name: 'x' }] }))
      const warn = vi.fn()
      const t = await makeTestApp()
      const result = await seedDemo({ db: t.db, config: { argon2: TEST_ARGON2 } }, { examplesDir: dir, warn })
      expect(result.sheets).toEqual([])
      expect(warn).toHaveBeenCalledWith('demo seed: skipping examples/broken.penumbra.json: cells[0].value required')
      expect(warn).toHaveBeenCalledWith('demo seed: no valid examples/*.penumbra.json found; the demo lab has no sheets')
    } finally {
      rmSync(dir, { recursive: true, force: true })
    }
  })

  it('formatDemoTable(accounts) lines up the columns', () => {
    const lines = formatDemoTable(DEMO_ACCOUNTS.slice(0, 2)).split('\n')
    expect(lines[0]).toBe('  role    name            e-mail                       password')
    expect(lines[2]).toBe('  owner   Mira Halvorsen  mira@halvorsen-lab.example   demo-owner-2026')
    expect(lines[3]).toBe('  editor  Tomás Reyes     tomas@halvorsen-lab.example  demo-editor-2026')
  })
})

describe('serving the built client', () => {
  it('serves assets, answers page addresses with index.html, and keeps API and /dev misses as JSON 404s', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'penumbra-dist-'))
    try {
      mkdirSync(path.join(dir, 'assets'))
      writeFileSync(path.join(dir, 'index.html'), '<!doctype html><title>Penumbra</title><div id="app"></div>')
      writeFileSync(path.join(dir, 'assets', 'main-abc123.js'), 'console.log(1)')
      const t = await makeTestApp({ config: { clientDir: dir } })
      const asset = await request(t.app).get('/assets/main-abc123.js')
      expect(asset.status).toBe(200)
      expect(asset.headers['cache-control']).toBe('public, max-age=31536000, immutable')
      for (const page of ['/', '/labs/some-lab', '/sheets/x', '/invitations/tok']) {
        const res = await request(t.app).get(page).set('Accept', 'text/html')
        expect(res.status).toBe(200)
        expect(res.text).toContain('<div id="app">')
      }
      expect((await request(t.app).get('/assets/missing.js')).status).toBe(404)
      const api = await request(t.app).get('/api/nope').set('Accept', 'text/html')
      expect(api.status).toBe(404)
      expect(api.body.error).toMatch(/nothing at/)
      expect((await request(t.app).get('/dev/nope').set('Accept', 'text/html')).status).toBe(404)
    } finally {
      rmSync(dir, { recursive: true, force: true })
    }
  })
})

describe('seedDemo with the server secret', () => {
  it('seeds two snapshots of the band-edge sheet, reviews in each state, a comment thread and a live guest link', async () => {
    const { seedDemo: seed } = await import('../../server/db/seed')
    const { demoGuestUrl } = await import('../../server/db/seedSnapshots')
    const t = await makeTestApp()
    const result = await seed({ db: t.db, config: { ...t.config, argon2: TEST_ARGON2 } }, { secret: t.secret })
    expect(result.review).toBeDefined()
    const owner = await signIn(t, DEMO_ACCOUNTS[0].email, DEMO_ACCOUNTS[0].password)
    const bandEdge = result.sheets.find((s) => s.title.includes('H-17'))!
    const timeline = (await call(t, owner).get(`/api/sheets/${bandEdge.id}/snapshots`)).body.snapshots
    expect(timeline.map((s: { reviewState: string; authorName: string }) => [s.reviewState, s.authorName])).toEqual([
      ['approved', 'Tomás Reyes'],
      ['changes-requested', 'Tomás Reyes'],
    ])
    const reviewer = await signIn(t, DEMO_ACCOUNTS[2].email, DEMO_ACCOUNTS[2].password)
    const queue = (await call(t, reviewer).get(`/api/labs/${result.labId}/reviews`)).body
    expect(queue.waiting.map((r: { state: string }) => r.state)).toEqual(['open'])
    expect(queue.decided.map((r: { state: string }) => r.state).sort()).toEqual(['approved', 'changes-requested'])
    const thread = (await call(t, owner).get(`/api/sheets/${bandEdge.id}/comments`)).body.comments
    expect(thread).toHaveLength(2)
    expect(thread[1].parentId).toBe(thread[0].id)
    const url = await demoGuestUrl(t.db, t.secret, t.config)
    expect(url).toBe(result.review!.guestUrl)
    const shown = await call(t).get(`/api/guest/${url!.split('/').pop()}`)
    expect(shown.status).toBe(200)
    expect(shown.body.hash).toBe(timeline[0].hash)
    // the stored results of the seeded snapshots are those of its sheet file, as everywhere
    const detail = (await call(t, owner).get(`/api/snapshots/${timeline[1].id}`)).body
    expect(detail.file.cells.find((c: { id: string }) => c.id === 'h17-tauc').from).toBe(1.48)
  })
})
