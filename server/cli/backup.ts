/**
 * Online backup of the embedded database: `npm run --silent backup -- <target.sqlite>` copies DATA_DIR/penumbra.sqlite
 * (default ./data) with SQLite's backup API while the server keeps running, then checks the copy's integrity.
 *
 * Exit status: 0 when the copy is complete and sound; 1 when the backup or its check failed; 2 for a wrong call (no
 * target, a target that exists, no database, or DATABASE_URL set — a PostgreSQL deployment is backed up with pg_dump).
 */
import { existsSync } from 'node:fs'
import path from 'node:path'
import { pathToFileURL } from 'node:url'
import Database from 'better-sqlite3'

const USAGE = 'usage: npm run --silent backup -- <target.sqlite>   (copies DATA_DIR/penumbra.sqlite while the server runs)'

export async function main(argv: readonly string[], env: NodeJS.ProcessEnv = process.env): Promise<number> {
  if (env.DATABASE_URL) {
    process.stderr.write('DATABASE_URL is set: this deployment keeps its data in PostgreSQL. Back it up with pg_dump (see the README, "Running for many labs").\n')
    return 2
  }
  if (argv.length !== 1 || argv[0].startsWith('-')) {
    process.stderr.write(`${USAGE}\n`)
    return 2
  }
  const target = path.resolve(argv[0])
  const source = path.join(path.resolve(env.DATA_DIR ?? 'data'), 'penumbra.sqlite')
  if (existsSync(target)) {
    process.stderr.write(`${target}: already exists; choose a new file name (a backup never overwrites)\n`)
    return 2
  }
  if (!existsSync(source)) {
    process.stderr.write(`${source}: no database here (set DATA_DIR to the server's data folder)\n`)
    return 2
  }
  const db = new Database(source, { readonly: true, fileMustExist: true })
  try {
    db.pragma('busy_timeout = 5000')
    const progress = await db.backup(target)
    const copy = new Database(target, { readonly: true })
    try {
      const check = copy.pragma('integrity_check', { simple: true })
      if (check !== 'ok') {
        process.stderr.write(`${target}: the copy failed its integrity check: ${String(check)}\n`)
        return 1
      }
    } finally {
      copy.close()
    }
    process.stdout.write(`Backed up ${source} to ${target} (${progress.totalPages} pages).\n`)
    return 0
  } catch (err) {
    process.stderr.write(`backup failed: ${err instanceof Error ? err.message : String(err)}\n`)
    return 1
  } finally {
    db.close()
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) process.exitCode = await main(process.argv.slice(2))
