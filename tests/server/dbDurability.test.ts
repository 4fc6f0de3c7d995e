import { describe, it, expect, afterEach } from 'vitest'
import { ON_POSTGRES, sqliteOnly } from '../utils/db'
import { mkdtempSync, rmSync, statSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { openDb } from '../../server/db/client'
import { startCheckpoints } from '../../server/db/checkpoints'
import { createSqliteStore } from '../../server/collab/store'

// SQLite's `synchronous` pragma: 1 = NORMAL, 2 = FULL (sqlite.org/pragma.html#pragma_synchronous).
describe.skipIf(ON_POSTGRES)(sqliteOnly('openDb(file, options)'), () => {
  const dirs: string[] = []
  const file = () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'penumbra-db-'))
    dirs.push(dir)
    return path.join(dir, 'p.db')
  }
  afterEach(() => {
    delete process.env.PENUMBRA_SQLITE_SYNC
    for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true })
  })

  it('opens a file in WAL mode with synchronous NORMAL by default (durable against a killed process)', () => {
    const h = openDb(file())
    expect(h.sqlite.pragma('journal_mode', { simple: true })).toBe('wal')
    expect(h.sqlite.pragma('synchronous', { simple: true })).toBe(1)
    expect(h.sqlite.pragma('foreign_keys', { simple: true })).toBe(1)
    h.close()
  })

  it('uses synchronous FULL when asked, or when PENUMBRA_SQLITE_SYNC=FULL', () => {
    const a = openDb(file(), { durability: 'FULL' })
    expect(a.sqlite.pragma('synchronous', { simple: true })).toBe(2)
    a.close()
    process.env.PENUMBRA_SQLITE_SYNC = 'full'
    const b = openDb(file())
    expect(b.sqlite.pragma('synchronous', { simple: true })).toBe(2)
    b.close()
  })

  it('keeps the update log WITHOUT ROWID, keyed by sheet and seq (migration 0005)', () => {
    const h = openDb(file())
    const table = h.sqlite.prepare("SELECT sql FROM sqlite_master WHERE name = 'sheet_updates'").pluck().get() as string
    expect(table).toMatch(/PRIMARY KEY\(`sheet_id`, `seq`\)/)
    expect(table).toMatch(/WITHOUT ROWID\s*$/)
    h.close()
  })

  it('lets SQLite checkpoint on its own while edits are appended (the append steps its RETURNING to the end)', () => {
    const f = file()
    const h = openDb(f)
    h.sqlite.prepare("INSERT INTO users (id, email, name, password_hash, created_at) VALUES ('u', 'u@example.org', 'U', 'x', 0)").run()
    h.sqlite.prepare("INSERT INTO labs (id, name, created_by, created_at) VALUES ('l', 'L', 'u', 0)").run()
    h.sqlite.prepare("INSERT INTO sheets (id, lab_id, title, created_by, created_at, updated_at) VALUES ('s', 'l', 'S', 'u', 0, 0)").run()
    const store = createSqliteStore(h.db)
    const update = new Uint8Array(200).fill(7)
    const seqs = Array.from({ length: 3000 }, () => store.storeUpdates([{ sheetId: 's', update, userId: null }])[0])
    expect(seqs[2999] - seqs[0]).toBe(2999)
    // SQLite's automatic checkpoint runs once the log passes 1,000 pages, and the log then starts over
    const [{ log }] = h.sqlite.pragma('wal_checkpoint(PASSIVE)') as { log: number }[]
    expect(log).toBeLessThan(1000)
    h.close()
  })

  it('runs checkpoints in a worker thread when asked: commits leave the log alone, the worker folds it into the file', async () => {
    const f = file()
    const h = openDb(f)
    h.sqlite.exec('CREATE TABLE t (x BLOB)')
    // first a worker that waits an hour: commits alone must not checkpoint
    const idle = startCheckpoints(h.sqlite, f, 3_600_000)
    expect(h.sqlite.pragma('wal_autocheckpoint', { simple: true })).toBe(0)
    const before = statSync(f).size
    const insert = h.sqlite.prepare('INSERT INTO t VALUES (?)')
    for (let i = 0; i < 2000; i++) insert.run(Buffer.alloc(2000, i % 256))
    expect(statSync(f).size).toBe(before)
    await idle.stop()
    // then one on a short timer folds the log into the file without any commit
    const checkpoints = startCheckpoints(h.sqlite, f, 50)
    await expect.poll(() => statSync(f).size, { timeout: 10_000, interval: 50 }).toBeGreaterThan(before + 2000 * 2000)
    await checkpoints.stop()
    expect(h.sqlite.pragma('wal_autocheckpoint', { simple: true })).toBe(1000)
    h.close()
  })
})
