/**
 * Reproducibility: every demo sheet, frozen through the API, exported and recomputed by the command-line evaluator,
 * gives the stored results bit for bit; `--check` says so (exit 0), names each cell that differs (exit 1) and
 * refuses a file that is not a snapshot (exit 2).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { spawnSync } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { eq } from 'drizzle-orm'
import { call, makeTestApp, seedLab, type TestApp } from '../utils/server'
import { readExamples, EXAMPLES_DIR } from '../../server/db/seed'
import { createSheet } from '../../server/services/sheets'
import { snapshots } from '../../server/db/tables'

const root = path.join(__dirname, '../..')
let dir: string
let t: TestApp
const exported: { title: string; file: string; storedResults: string }[] = []

function cli(args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/evaluate.ts', ...args], { cwd: root, encoding: 'utf8', timeout: 110000, maxBuffer: 1 << 30 })
  return { status: r.status, stdout: r.stdout, stderr: r.stderr }
}

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'penumbra-check-'))
  t = await makeTestApp()
  const lab = await seedLab(t)
  for (const [i, example] of readExamples(EXAMPLES_DIR, (m) => console.warn(m)).entries()) {
    const sheet = await createSheet(t.deps, lab.labId, lab.users.editor.id, example.sheet)
    const made = await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheet.id}/snapshots`, { message: `frozen for the check ${i}` })
    expect(made.status).toBe(201)
    const res = await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${made.body.id}/file`).buffer(true).parse((r, cb) => {
      let text = ''
      r.setEncoding('utf8')
      r.on('data', (c: string) => (text += c))
      r.on('end', () => cb(null, text))
    })
    expect(res.status).toBe(200)
    expect(res.headers['content-disposition']).toMatch(/\.penumbra\.json/)
    const file = path.join(dir, `${i}.penumbra.json`)
    writeFileSync(file, res.body as string)
    const [row] = await t.db.select().from(snapshots).where(eq(snapshots.id, made.body.id))
    exported.push({ title: example.sheet.title, file, storedResults: row.results })
  }
}, 120_000)

afterAll(async () => {
  await t?.close()
  if (dir) rmSync(dir, { recursive: true, force: true })
})

describe('npm run evaluate -- <snapshot file>', () => {
  it('prints exactly the stored results for every demo sheet (bit for bit)', () => {
    expect(exported.length).toBeGreaterThanOrEqual(3)
    for (const e of exported) {
      const r = cli([e.file])
      expect(r.status, e.title).toBe(0)
      expect(r.stdout, e.title).toBe(`${e.storedResults}\n`)
    }
  }, 120_000)
})

describe('npm run evaluate -- <snapshot file> --check', () => {
  it('exits 0 and says every result matches for every demo sheet', () => {
    for (const e of exported) {
      const r = cli([e.file, '--check'])
      expect(r.status, `${e.title}: ${r.stdout}${r.stderr}`).toBe(0)
      expect(r.stdout).toMatch(/all \d+ stored results match the recomputation bit for bit/)
    }
  }, 120_000)

  it('exits 1 naming the cell whose stored result differs in its last bit', () => {
    const e = exported.find((x) => x.title.includes('H-17'))!
    const json = JSON.parse(readFileSync(e.file, 'utf8'))
    const cell = json.snapshot.results.cells.find((c: { name?: string }) => c.name === 'lambda_g')
    const bits = new Float64Array([cell.value])
    new BigUint64Array(bits.buffer)[0] ^= 1n
    cell.value = bits[0]
    const file = path.join(dir, 'tampered.penumbra.json')
    writeFileSync(file, JSON.stringify(json))
    const r = cli([file, '--check'])
    expect(r.status).toBe(1)
    expect(r.stdout).toContain('cell lambda_g: value: stored')
    expect(r.stdout).not.toContain('hash')
  }, 120_000)

  it('exits 1 naming the changed hash and every cell downstream of an edited parameter', () => {
    const e = exported.find((x) => x.title.includes('H-17'))!
    const json = JSON.parse(readFileSync(e.file, 'utf8'))
    json.cells.find((c: { name?: string }) => c.name === 'd').value = 950
    const file = path.join(dir, 'edited.penumbra.json')
    writeFileSync(file, JSON.stringify(json))
    const r = cli([file, '--check'])
    expect(r.status).toBe(1)
    expect(r.stdout).toMatch(/the sheet differs from the one frozen: its hash is [0-9a-f]{10}/)
    expect(r.stdout).toContain('cell d: value: stored 900, recomputed 950')
  }, 120_000)

  it('exits 2 for a sheet file without a snapshot member, and for a file that is not JSON', () => {
    const plain = cli([path.join(EXAMPLES_DIR, 'edge-model.penumbra.json'), '--check'])
    expect(plain.status).toBe(2)
    expect(plain.stderr).toContain('not a snapshot file')
    const bad = path.join(dir, 'bad.penumbra.json')
    writeFileSync(bad, '{ nope')
    const r = cli([bad, '--check'])
    expect(r.status).toBe(2)
    expect(r.stderr).toContain('not valid JSON')
  }, 120_000)
})
