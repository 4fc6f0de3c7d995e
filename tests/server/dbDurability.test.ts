import { describe, it, expect, afterEach } from 'vitest'
import { mkdtempSync, rmSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { openDb } from '../../server/db/client'

// SQLite's `synchronous` pragma: 1 = NORMAL, 2 = FULL (sqlite.org/pragma.html#pragma_synchronous).
describe('openDb(file, options)', () => {
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
})
