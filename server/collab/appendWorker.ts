/**
 * Appends a writer's update in a worker thread while the event loop applies it to the document (SQLite files only).
 *
 * Write before relay stays as it was: the registry hands the row over (`begin`) once the update has passed its checks,
 * applies it to the document, and before it relays anything waits for the commit (the function `begin` returns). Only
 * the order changes: the commit, about 60 µs on this machine, no longer adds to the apply but runs beside it.
 *
 * The two threads meet on a SharedArrayBuffer: rows are handed over with Atomics.notify, so the event loop never gives
 * up its turn (the frames then leave in the same turn, as before). Several edits often arrive in one turn, most of all
 * in a burst: each is handed over as it is accepted, without waiting for the one before, and whatever the worker finds
 * waiting when it comes to them it claims and commits in one transaction (a row whose insert fails is answered with
 * its error alone; the others of its transaction are stored). The worker holds its own connection with the same
 * durability and inserts with the very statement the store uses, so the seq is still assigned under SQLite's write
 * lock, in the order the rows were handed over.
 *
 * Waiting for the answer, the event loop avoids the two wake-ups that made its slow waits (traced over a bench run,
 * 45–120 waits per round passed 0.5 ms: some 40 % because the worker was not awake yet, the rest because the event
 * loop itself slept through the commit and took that long to wake):
 * - rows the worker has not claimed yet are taken back (one compare-and-swap on the claim word) and committed on the
 *   event loop, after any rows the worker did claim;
 * - for a commit the worker has begun, the event loop watches the answer word for up to `SPIN_MS` before it sleeps
 *   in Atomics.wait.
 * In `npm run bench -- collab-latency` this brought p99 within the target in consecutive runs (DEVELOPERS.md,
 * benchmarks). If the worker cannot start, or does not answer within `ANSWER_MS`, it is not used again and rows are
 * appended on the event loop as before.
 */
import { Worker } from 'node:worker_threads'
import type Database from 'better-sqlite3'
import type { PendingRow } from './store'

/** Longer than the connections' busy timeout (5 s), so a commit that waits for a lock fails before we give up. */
const ANSWER_MS = 10_000
/**
 * How long the event loop watches for a commit the worker has begun before it sleeps until the answer: the commit
 * takes tens of µs, while waking the event loop from Atomics.wait often took hundreds on a virtual machine.
 */
const SPIN_MS = 1
/** Room for the rows in flight: ids, the update (a writer's frame is at most 1 MiB), a length word each. */
const DATA_BYTES = 2 * 1024 * 1024
/** Rows handed over and not yet answered, at most; each has a slot for its place, seq, status and error message. */
const SLOTS = 64
const MESSAGE_BYTES = 512

// Control words: rows handed over, rows answered, stop, ready, transactions committed; then per slot its row's
// offset, seq (or, when its status is 1, the length of its error message) and status.
const REQ = 0
const DONE = 1
const STOP = 2
const READY = 3
const COMMITS = 4
/** The last row claimed, by the worker (to commit it) or by the event loop (taking back rows the worker has not reached). */
const CLAIM = 5
const OFFSET = 8
const SEQ = OFFSET + SLOTS
const STATUS = SEQ + SLOTS
const CONTROL_WORDS = STATUS + SLOTS
const CONTROL_BYTES = CONTROL_WORDS * 4
const DATA_START = CONTROL_BYTES + SLOTS * MESSAGE_BYTES

const WORKER_SOURCE = `
const { workerData } = require('node:worker_threads')
const Database = require('better-sqlite3')
const ctrl = new Int32Array(workerData.sab, 0, ${CONTROL_WORDS})
const messages = new Uint8Array(workerData.sab, ${CONTROL_BYTES}, ${SLOTS * MESSAGE_BYTES})
const data = new Uint8Array(workerData.sab, ${DATA_START})
const view = new DataView(workerData.sab, ${DATA_START})
const db = new Database(workerData.file, { fileMustExist: true })
db.pragma('busy_timeout = 5000')
db.pragma('synchronous = ' + workerData.synchronous)
db.pragma('foreign_keys = ON')
db.pragma('wal_autocheckpoint = 0')
const insert = db.prepare(workerData.sql)
const begin = db.prepare('BEGIN IMMEDIATE')
const commit = db.prepare('COMMIT')
const text = new TextDecoder()
const encoder = new TextEncoder()
function fail(slot, err) {
  const message = encoder.encode(String(err && err.message ? err.message : err).slice(0, 160))
  messages.set(message, slot * ${MESSAGE_BYTES})
  ctrl[${SEQ} + slot] = message.length
  ctrl[${STATUS} + slot] = 1
}
Atomics.store(ctrl, ${READY}, 1)
let done = 0
for (;;) {
  Atomics.wait(ctrl, ${REQ}, done)
  if (Atomics.load(ctrl, ${STOP})) break
  // every row handed over by now goes into one transaction; a row whose insert fails is answered with the error alone
  const upto = Atomics.load(ctrl, ${REQ})
  if (upto === done) continue
  // unless the event loop, tired of waiting for this thread to wake, took them back: it answers those itself
  const claimed = Atomics.compareExchange(ctrl, ${CLAIM}, done, upto)
  if (claimed !== done) {
    done = claimed
    continue
  }
  const createdAt = Date.now()
  let open = false
  try {
    begin.run()
    open = true
  } catch (err) {
    for (let t = done + 1; t <= upto; t++) fail(t % ${SLOTS}, err)
  }
  if (open) {
    let firstError = null
    for (let t = done + 1; t <= upto; t++) {
      const slot = t % ${SLOTS}
      try {
        let p = ctrl[${OFFSET} + slot]
        const end = p + 4 + view.getUint32(p)
        p += 4
        const sheetLength = data[p++]
        const sheetId = text.decode(data.subarray(p, p + sheetLength))
        p += sheetLength
        const userLength = data[p++]
        let userId = null
        if (userLength !== 255) {
          userId = text.decode(data.subarray(p, p + userLength))
          p += userLength
        }
        const update = Buffer.from(data.subarray(p, end))
        ctrl[${SEQ} + slot] = insert.all({ sheetId, update, userId, createdAt })[0].seq
        ctrl[${STATUS} + slot] = 0
      } catch (err) {
        fail(slot, err)
        firstError = firstError || err
      }
    }
    try {
      // an error SQLite answers by rolling back the whole transaction (a full disk, say) fails every row of it
      if (!db.inTransaction) throw firstError
      commit.run()
      Atomics.add(ctrl, ${COMMITS}, 1)
    } catch (err) {
      try { if (db.inTransaction) db.exec('ROLLBACK') } catch {}
      for (let t = done + 1; t <= upto; t++) fail(t % ${SLOTS}, err)
    }
  }
  done = upto
  Atomics.store(ctrl, ${DONE}, done)
  Atomics.notify(ctrl, ${DONE})
}
db.close()
`

export interface AppendWorker {
  /**
   * Hands a row to the worker and returns at once: the function returned waits for its commit and gives its seq (it
   * throws if the commit failed). Undefined when the worker is not in use: the caller appends the row itself.
   */
  begin(row: PendingRow): (() => number) | undefined
  /** Transactions the worker has committed (rows handed over while it commits go into its next one together). */
  commits(): number
  /** Rows the event loop committed itself because the worker had not woken up to them when their answer was due. */
  takenBack(): number
  stop(): Promise<void>
}

/**
 * `appendHere` commits one row on the calling thread (the store's own append): used for rows the event loop takes back
 * because the worker has not woken up to them yet.
 */
export function startAppendWorker(sqlite: Database.Database, insertSql: string, appendHere: (row: PendingRow) => number, log?: (message: string) => void): AppendWorker {
  const sab = new SharedArrayBuffer(DATA_START + DATA_BYTES)
  const ctrl = new Int32Array(sab, 0, CONTROL_WORDS)
  const messages = new Uint8Array(sab, CONTROL_BYTES, SLOTS * MESSAGE_BYTES)
  const data = new Uint8Array(sab, DATA_START)
  const view = new DataView(sab, DATA_START)
  const synchronous = sqlite.pragma('synchronous', { simple: true }) as number
  const worker = new Worker(WORKER_SOURCE, { eval: true, workerData: { sab, file: sqlite.name, sql: insertSql, synchronous } })
  worker.unref()
  let usable = true
  const retire = (why: string) => {
    if (!usable) return
    usable = false
    log?.(`appending on the event loop from now on: ${why}`)
  }
  worker.once('error', (err) => retire(`the append worker failed (${err.message})`))
  const exited = new Promise<void>((resolve) =>
    worker.once('exit', () => {
      retire('the append worker stopped')
      resolve()
    }),
  )
  let stopping: Promise<void> | null = null
  const encoder = new TextEncoder()
  const text = new TextDecoder()
  let handedOut = 0
  /** Where the next row goes in the data area; back to 0 whenever the worker has answered every row. */
  let tail = 0
  /** Rows handed over whose answer has not been read yet, by ticket: reading it frees the ticket's slot. */
  const unread = new Map<number, () => void>()
  /** Rows handed over and not yet answered, by ticket, for taking back. */
  const rows = new Map<number, PendingRow>()
  /** Answers of rows taken back (their seq, or why the insert failed), by ticket, until read. */
  const takenAnswers = new Map<number, number | Error>()
  let takenBack = 0

  /** Waits until every row up to `ticket` is answered, taking back those the worker has not claimed yet. */
  const answered = (ticket: number): void => {
    if (Atomics.load(ctrl, DONE) >= ticket) return
    const claimed = Atomics.load(ctrl, CLAIM)
    if (claimed < ticket && Atomics.compareExchange(ctrl, CLAIM, claimed, handedOut) === claimed) {
      // The worker is still asleep: committing here (tens of µs) beats waiting for it to wake (often hundreds).
      // Rows it claimed before are committed first, so seqs still follow the order rows were handed over.
      const upto = handedOut
      finished(claimed)
      for (let t = claimed + 1; t <= upto; t++) {
        try {
          takenAnswers.set(t, appendHere(rows.get(t)!))
        } catch (err) {
          takenAnswers.set(t, err as Error)
        }
      }
      takenBack += upto - claimed
      Atomics.store(ctrl, DONE, upto)
      return
    }
    finished(ticket)
  }

  /** Waits until the worker has answered every row up to `ticket`. */
  const finished = (ticket: number): void => {
    if (Atomics.load(ctrl, DONE) >= ticket) return
    const until = performance.now() + SPIN_MS
    while (Atomics.load(ctrl, DONE) < ticket && performance.now() < until);
    const deadline = Date.now() + ANSWER_MS
    for (;;) {
      const done = Atomics.load(ctrl, DONE)
      if (done >= ticket) return
      const left = deadline - Date.now()
      if (left <= 0 || Atomics.wait(ctrl, DONE, done, left) === 'timed-out') {
        retire(`no answer within ${ANSWER_MS / 1000} s`)
        throw new Error(`the append worker did not answer within ${ANSWER_MS / 1000} s`)
      }
    }
  }

  const answer = (ticket: number): number => {
    answered(ticket)
    rows.delete(ticket)
    const taken = takenAnswers.get(ticket)
    if (taken !== undefined) {
      takenAnswers.delete(ticket)
      if (taken instanceof Error) throw taken
      return taken
    }
    const slot = ticket % SLOTS
    if (ctrl[STATUS + slot] !== 0) throw new Error(text.decode(messages.slice(slot * MESSAGE_BYTES, slot * MESSAGE_BYTES + ctrl[SEQ + slot])))
    return ctrl[SEQ + slot]
  }

  return {
    begin(row) {
      if (!usable || Atomics.load(ctrl, READY) !== 1) return undefined
      const sheet = encoder.encode(row.sheetId)
      const user = row.userId === null ? null : encoder.encode(row.userId)
      const length = 4 + 2 + sheet.length + (user?.length ?? 0) + row.update.length
      if (sheet.length > 254 || (user && user.length > 254) || length > DATA_BYTES) return undefined
      const ticket = handedOut + 1
      // the slot this ticket takes: its previous row's answer is read first (it stays with that row)
      unread.get(ticket - SLOTS)?.()
      if (Atomics.load(ctrl, DONE) === handedOut) tail = 0
      else if (tail + length > DATA_BYTES) {
        // no room left behind the rows in flight: wait for them all, then start the area again
        try {
          answered(handedOut)
        } catch {
          return undefined
        }
        tail = 0
      }
      if (!usable) return undefined
      let p = tail
      view.setUint32(p, length - 4)
      p += 4
      data[p++] = sheet.length
      data.set(sheet, p)
      p += sheet.length
      if (user === null) data[p++] = 255
      else {
        data[p++] = user.length
        data.set(user, p)
        p += user.length
      }
      data.set(row.update, p)
      ctrl[OFFSET + (ticket % SLOTS)] = tail
      tail += length
      rows.set(ticket, row)
      handedOut = ticket
      Atomics.store(ctrl, REQ, ticket)
      Atomics.notify(ctrl, REQ)
      let result: { seq: number } | { error: Error } | undefined
      const settle = () => {
        if (result) return
        try {
          result = { seq: answer(ticket) }
        } catch (err) {
          result = { error: err as Error }
        }
        unread.delete(ticket)
      }
      unread.set(ticket, settle)
      return () => {
        settle()
        if ('error' in result!) throw result.error
        return result!.seq
      }
    },
    commits: () => Atomics.load(ctrl, COMMITS),
    takenBack: () => takenBack,
    stop() {
      usable = false
      stopping ??= (async () => {
        Atomics.store(ctrl, STOP, 1)
        Atomics.add(ctrl, REQ, 1)
        Atomics.notify(ctrl, REQ)
        await Promise.race([exited, new Promise((resolve) => setTimeout(resolve, 2000).unref())])
        await worker.terminate()
      })()
      return stopping
    },
  }
}
