// `npm run backup`: an online copy of the embedded database, taken while another connection keeps writing, that opens,
// passes SQLite's integrity check and holds every row committed before the copy began.
import { afterEach, describe, expect, it } from 'vitest'
import { spawn } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import Database from 'better-sqlite3'
import { openDb } from '../../server/db/client'
import { users } from '../../server/db/schema'

const root = path.join(__dirname, '../..')
const dirs: string[] = []
const tmp = () => {
  const d = mkdtempSync(path.join(os.tmpdir(), 'penumbra-backup-'))
  dirs.push(d)
  return d
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true })
})

function backup(args: string[], env: Record<string, string>): Promise<{ status: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, ['--import', 'tsx', 'server/cli/backup.ts', ...args], { cwd: root, env: { ...process.env, DATABASE_URL: '', ...env } })
    let stdout = ''
    let stderr = ''
    child.stdout.on('data', (d: Buffer) => (stdout += d.toString()))
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()))
    child.on('exit', (status) => resolve({ status, stdout, stderr }))
  })
}

describe('npm run backup (the embedded SQLite database)', () => {
  it('copies a live database: the copy is sound and holds every row committed before it began', async () => {
    const dataDir = tmp()
    const handle = openDb(path.join(dataDir, 'penumbra.sqlite'))
    for (let i = 0; i < 500; i++)
      handle.db.insert(users).values({ id: `u${i}`, email: `person${i}@halvorsen-lab.example`, name: `Person ${i}`, passwordHash: 'x', createdAt: i }).run()
    // keep writing from this process while the copy runs in another
    let extra = 0
    const writer = setInterval(() => {
      for (let k = 0; k < 20; k++, extra++)
        handle.db.insert(users).values({ id: `w${extra}`, email: `late${extra}@halvorsen-lab.example`, name: 'Late', passwordHash: 'x', createdAt: 0 }).run()
    }, 1)
    const target = path.join(tmp(), 'copy.sqlite')
    const r = await backup([target], { DATA_DIR: dataDir })
    clearInterval(writer)
    handle.close()
    expect(r.stderr).toBe('')
    expect(r.status).toBe(0)
    expect(r.stdout).toMatch(/^Backed up .*penumbra\.sqlite to .*copy\.sqlite \(\d+ pages\)\.\n$/)
    const copy = new Database(target, { readonly: true })
    expect(copy.pragma('integrity_check', { simple: true })).toBe('ok')
    const n = (copy.prepare("SELECT count(*) AS n FROM users WHERE id LIKE 'u%'").get() as { n: number }).n
    expect(n).toBe(500)
    copy.close()
  })

  it('refuses, with exit 2 and a reason, a missing target, an existing one, a folder without a database and a PostgreSQL deployment', async () => {
    const empty = tmp()
    const existing = path.join(tmp(), 'there.sqlite')
    writeFileSync(existing, 'x')
    const cases: [string[], Record<string, string>, RegExp][] = [
      [[], { DATA_DIR: empty }, /^usage: npm run --silent backup -- <target\.sqlite>/],
      [[path.join(empty, 'new.sqlite')], { DATA_DIR: empty }, /no database here \(set DATA_DIR/],
      [[existing], { DATA_DIR: empty }, /already exists; choose a new file name/],
      [[path.join(empty, 'new.sqlite')], { DATA_DIR: empty, DATABASE_URL: 'postgres://penumbra@127.0.0.1:5432/penumbra' }, /PostgreSQL\. Back it up with pg_dump/],
    ]
    for (const [args, env, message] of cases) {
      const r = await backup(args, env)
      expect(r.status).toBe(2)
      expect(r.stderr).toMatch(message)
    }
  })
})
