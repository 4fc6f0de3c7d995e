/**
 * POST /api/evaluate: the command-line evaluator's answer, computed on a worker thread within a whole-sheet time
 * budget, with a size limit of its own; a slow sheet never holds up other requests.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { execFileSync } from 'node:child_process'
import { readdirSync, readFileSync } from 'node:fs'
import path from 'node:path'
import request from 'supertest'
import { call, makeTestApp, seedLab, type SeededLab, type TestApp } from '../utils/server'
import { SheetEvaluator } from '../../server/services/evaluation'

const ROOT = path.resolve(__dirname, '../..')
const EXAMPLES = path.join(ROOT, 'examples')

/** 60 formula cells over million-point grids: several seconds of work, every cell well inside its own budget. */
function slowSheet(cells = 60): string {
  const list: unknown[] = [{ kind: 'parameter', name: 'n', value: 1_000_000 }]
  for (let i = 0; i < cells; i++) list.push({ kind: 'formula', name: `f${i}`, source: `sum(exp(-grid(0, ${i + 1}, n)) * sin(grid(0, 3, n)))` })
  return JSON.stringify({ format: 'penumbra.sheet', version: 1, title: 'A slow sheet', cells: list })
}

function post(t: TestApp, cookie: string, body: string, type = 'application/json') {
  return request(t.app).post('/api/evaluate').set('Cookie', cookie).set('Content-Type', type).send(body)
}

describe('POST /api/evaluate', () => {
  let t: TestApp
  let roomy: TestApp
  let lab: SeededLab
  let roomyLab: SeededLab
  beforeAll(async () => {
    t = await makeTestApp({ config: { evaluate: { maxBytes: 64 * 1024, maxResultBytes: 256 * 1024, budgetMs: 600 } } })
    roomy = await makeTestApp()
    lab = await seedLab(t)
    roomyLab = await seedLab(roomy)
  })
  afterAll(async () => {
    await t.close()
    await roomy.close()
  })

  it.each(readdirSync(EXAMPLES).filter((f) => f.endsWith('.penumbra.json')))('answers exactly what the command-line evaluator prints for examples/%s', async (name) => {
    const file = path.join(EXAMPLES, name)
    const cli = execFileSync(process.execPath, ['--import', 'tsx', 'server/cli/evaluate.ts', file], { cwd: ROOT, encoding: 'utf8' })
    const res = await post(roomy, roomyLab.users.viewer.cookie, readFileSync(file, 'utf8'), 'application/vnd.penumbra.sheet+json')
    expect(res.status).toBe(200)
    expect(res.headers['content-type']).toBe('application/json; charset=utf-8')
    expect(res.text).toBe(cli.trimEnd())
  }, 60_000)

  it('answers 422 naming the whole-sheet budget for a slow sheet, while other requests are answered meanwhile', async () => {
    const order: string[] = []
    const slow = post(t, lab.users.editor.cookie, slowSheet()).then((res) => {
      order.push('evaluate')
      return res
    })
    // the event loop stays free: health and another signed-in read answer before the evaluation is stopped
    const health = await request(t.app).get('/api/health')
    order.push('health')
    const labs = await call(t, lab.users.editor.cookie).get('/api/labs')
    order.push('labs')
    expect([health.status, labs.status]).toEqual([200, 200])
    const res = await slow
    expect(order).toEqual(['health', 'labs', 'evaluate'])
    expect(res.status).toBe(422)
    expect(res.body.error).toBe('The sheet took longer than 600 ms to evaluate and was stopped. Make it lighter (shorter grids, fewer sweep steps) or evaluate it with the command-line evaluator (npm run evaluate).')
    // a fresh worker takes the next sheet
    const next = await call(t, lab.users.editor.cookie).post('/api/evaluate', { format: 'penumbra.sheet', version: 1, title: 'Quick', cells: [{ kind: 'parameter', name: 'd', value: 850, unit: 'nm' }] })
    expect(next.status).toBe(200)
    expect(next.body.cells[0]).toMatchObject({ name: 'd', status: 'ok', value: 850, unit: 'nm' })
    // Express matches paths without regard to case or a trailing slash; so does the body reader
    const shouted = await call(t, lab.users.editor.cookie).post('/API/Evaluate/', { format: 'penumbra.sheet', version: 1, title: 'Loud', cells: [] })
    expect(shouted.status).toBe(200)
    expect(shouted.body).toEqual({ title: 'Loud', cells: [], engine: expect.any(String) })
  }, 30_000)

  it('answers 413 for a sheet file over its own size limit, before any evaluation', async () => {
    const big = JSON.stringify({ format: 'penumbra.sheet', version: 1, title: 'Big', cells: [{ kind: 'note', text: 'x'.repeat(70 * 1024) }] })
    const res = await post(t, lab.users.viewer.cookie, big)
    expect(res.status).toBe(413)
    expect(res.body).toEqual({ error: 'The sheet file is larger than 64 KB, the most POST /api/evaluate accepts. Evaluate it with the command-line evaluator (npm run evaluate) instead.' })
  })

  it('answers 422 when the results would be larger than it sends', async () => {
    const res = await call(t, lab.users.viewer.cookie).post('/api/evaluate', { format: 'penumbra.sheet', version: 1, title: 'Long grid', cells: [{ kind: 'formula', name: 'x', source: 'grid(0, 1, 100000)' }] })
    expect(res.status).toBe(422)
    expect(res.body.error).toMatch(/^The sheet's results come to \d+(\.\d)? MB, more than POST \/api\/evaluate sends \(256 KB\)\./)
  })

  it('answers 400 for malformed JSON, an empty body and a file with problems, each with issues', async () => {
    const cookie = lab.users.viewer.cookie
    const malformed = await post(t, cookie, '{"format": "penumbra.sheet",')
    expect(malformed.status).toBe(400)
    expect(malformed.body.error).toBe('The request body is not valid JSON.')
    expect(malformed.body.issues).toEqual([{ path: '', message: expect.stringMatching(/^not valid JSON/) }])
    const empty = await call(t, cookie).post('/api/evaluate')
    expect(empty.status).toBe(400)
    expect(empty.body).toEqual({ error: 'Send a sheet file as the request body.', issues: [{ path: '', message: 'required' }] })
    const invalid = await call(t, cookie).post('/api/evaluate', { format: 'penumbra.sheet', version: 1, title: 'x', cells: [{ kind: 'formula', name: 'a' }, { kind: 'formula', name: 'a', source: '1' }] })
    expect(invalid.status).toBe(400)
    expect(invalid.body.issues).toEqual([
      { path: 'cells[0].source', message: 'required' },
      { path: 'cells[1].name', message: 'duplicate name "a" (also cells[0])' },
    ])
  })

  it('answers 401 without a session and 403 for a cross-site form post', async () => {
    const body = JSON.stringify({ format: 'penumbra.sheet', version: 1, title: 'x', cells: [] })
    expect((await request(t.app).post('/api/evaluate').set('Content-Type', 'application/json').send(body)).status).toBe(401)
    const form = await request(t.app).post('/api/evaluate').set('Cookie', lab.users.viewer.cookie).set('Content-Type', 'text/plain').send(body)
    expect(form.status).toBe(403)
  })
})

describe('SheetEvaluator', () => {
  it('evaluate() answers busy once its one worker is taken and its queue is full, and serves the queue in order', async () => {
    const evaluator = new SheetEvaluator({ workers: 1, maxQueue: 1, idleMs: 1000, maxHeapMb: 512 })
    try {
      const quick = JSON.stringify({ format: 'penumbra.sheet', version: 1, title: 'Quick', cells: [{ kind: 'parameter', name: 'a', value: 2 }] })
      const first = evaluator.evaluate(slowSheet(), 800)
      const second = evaluator.evaluate(quick, 5000)
      const third = await evaluator.evaluate(quick, 5000)
      expect(third).toEqual({ ok: false, reason: 'busy' })
      expect(await first).toEqual({ ok: false, reason: 'timeout', budgetMs: 800 })
      const done = await second
      expect(done.ok).toBe(true)
      if (done.ok) expect(JSON.parse(new TextDecoder().decode(done.json)).cells[0]).toMatchObject({ name: 'a', value: 2 })
    } finally {
      evaluator.close()
    }
  }, 30_000)

  it('close() answers the running and the waiting evaluations busy and stops its thread', async () => {
    const evaluator = new SheetEvaluator({ workers: 1, maxQueue: 4, idleMs: 1000, maxHeapMb: 512 })
    const running = evaluator.evaluate(slowSheet(), 20_000)
    const waiting = evaluator.evaluate(slowSheet(1), 20_000)
    await new Promise((r) => setTimeout(r, 1500))
    evaluator.close()
    expect(await running).toEqual({ ok: false, reason: 'busy' })
    expect(await waiting).toEqual({ ok: false, reason: 'busy' })
    expect(await evaluator.evaluate(slowSheet(1), 1000)).toEqual({ ok: false, reason: 'busy' })
  }, 30_000)
})
