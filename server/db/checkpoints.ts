/**
 * WAL checkpoints off the event loop. Under WAL, SQLite copies the log back into the database file once it passes
 * 1,000 pages, inside whichever commit crosses that mark, with an fsync: on the collaboration server that is an
 * edit's append, so every few hundred edits one of them (and every edit queued behind it) waited for the copy and the
 * disk. With `startCheckpoints`, the connection's automatic checkpoints are off and a worker thread holding its own
 * connection to the same file runs a PASSIVE checkpoint every `everyMs` instead: it never blocks the writer, and the
 * writer never pays for it. If the worker stops for any reason, automatic checkpoints come back on at once.
 */
import { Worker } from 'node:worker_threads'
import type Database from 'better-sqlite3'

/** The worker: its own connection, a PASSIVE checkpoint on a timer, closed on 'stop'. */
const WORKER_SOURCE = `
const { parentPort, workerData } = require('node:worker_threads')
const Database = require('better-sqlite3')
const db = new Database(workerData.file, { fileMustExist: true })
db.pragma('busy_timeout = 0')
const timer = setInterval(() => {
  try {
    db.pragma('wal_checkpoint(PASSIVE)')
  } catch {
    // busy or locked: the next tick tries again
  }
}, workerData.everyMs)
parentPort.on('message', (message) => {
  if (message !== 'stop') return
  clearInterval(timer)
  db.close()
  parentPort.close()
})
parentPort.postMessage('ready')
`

export interface Checkpoints {
  /** Stops the worker and turns automatic checkpoints back on. */
  stop(): Promise<void>
}

export function startCheckpoints(sqlite: Database.Database, file: string, everyMs = 500): Checkpoints {
  const autoPages = sqlite.pragma('wal_autocheckpoint', { simple: true }) as number
  sqlite.pragma('wal_autocheckpoint = 0')
  const restore = () => {
    if (sqlite.open) sqlite.pragma(`wal_autocheckpoint = ${autoPages}`)
  }
  const worker = new Worker(WORKER_SOURCE, { eval: true, workerData: { file, everyMs } })
  worker.unref()
  const exited = new Promise<void>((resolve) => worker.once('exit', () => resolve()))
  worker.once('error', restore)
  worker.once('exit', restore)
  return {
    async stop() {
      worker.postMessage('stop')
      await Promise.race([exited, new Promise((resolve) => setTimeout(resolve, 2000).unref())])
      await worker.terminate()
      restore()
    },
  }
}
