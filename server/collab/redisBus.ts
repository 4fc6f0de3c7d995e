/**
 * The fan-out between app instances over Redis streams (DESIGN §10), selected by REDIS_URL.
 *
 * - One stream per sheet (`<prefix>sheet:<sheetId>`, trimmed to about `maxLen` entries, expiring after a day without
 *   a publication): stored updates with their seq, presence (awareness), which is never stored, and the head seq
 *   an instance found when it loaded the sheet (so holders catch up on rows whose publication was lost).
 * - One control stream (`<prefix>control`): membership changes, ended sessions, deleted sheets, comments.
 * - Each instance reads, on a connection of its own with a blocking XREAD, the control stream from the moment it
 *   started and the stream of every sheet it holds from the moment it began to load it (`watch`): whatever is
 *   published after the database was read arrives, and the registry skips by seq what the load already gave it.
 * - Publishing is a queued command: it never holds up the relay to this instance's own connections. A Redis outage
 *   is logged once, counted (`failures()`, shown in the collaboration stats as `busFailures`), and the instance keeps
 *   serving its own connections; other instances miss what was published meanwhile and catch up from the database
 *   when the next seq they hear leaves a hole (registry.ts).
 * - Events an instance published itself are skipped when it reads them back.
 */
import { randomUUID } from 'node:crypto'
import { Redis } from 'ioredis'
import type { BusEvent, CollabBus, ControlEvent } from './bus'

export interface RedisBusOptions {
  /** Prefix of every key (default `penumbra:`); tests use one per run. */
  prefix?: string
  /** A sheet stream is trimmed to about this many entries (default 1000). */
  maxLen?: number
  /** The control stream is trimmed to about this many entries (default 10,000). */
  controlMaxLen?: number
  /** Longest wait of one blocking read, in ms (default 2000). New sheets are added to the read at once regardless. */
  blockMs?: number
  /** A sheet stream without publications expires after this long, in ms (default one day). */
  streamTtlMs?: number
  log?: (message: string) => void
}

export interface RedisBus extends CollabBus {
  watch(sheetId: string): Promise<void>
  unwatch(sheetId: string): void
  failures(): number
  /** Settles once the control stream is being read (or Redis was found unreachable at start: reading waits for it). */
  readonly ready: Promise<void>
  close(): Promise<void>
}

/** How a stream entry's fields are named: type, instance, seq, data. */
const F = { type: 't', instance: 'i', seq: 's', data: 'd' } as const


export function createRedisBus(url: string, options: RedisBusOptions = {}): RedisBus {
  const prefix = options.prefix ?? 'penumbra:'
  const maxLen = options.maxLen ?? 1000
  const controlMaxLen = options.controlMaxLen ?? 10_000
  const blockMs = options.blockMs ?? 2000
  const ttlMs = options.streamTtlMs ?? 86_400_000
  const log = options.log ?? ((m: string) => console.warn(`[redis bus] ${m}`))
  const controlKey = `${prefix}control`
  const sheetKey = (sheetId: string) => `${prefix}sheet:${sheetId}`
  // This instance's own wake-up stream, read with the others: an entry there ends the blocking read at once, so a
  // newly watched sheet joins the read without waiting out `blockMs`.
  const wakeKey = `${prefix}wake:${randomUUID()}`

  // Commands queue while Redis is away and are retried twice; a publication that still fails is counted and lost.
  const writer = new Redis(url, { maxRetriesPerRequest: 2 })
  // Blocking reads wait for Redis as long as it takes.
  const reader = new Redis(url, { maxRetriesPerRequest: null })
  for (const [name, conn] of [['publishing', writer] as const, ['reading', reader] as const])
    conn.on('error', (err: Error) => failed(`the ${name} connection: ${err.message}`))

  /** Stream key → id of the last entry seen (or the start point). The control stream is always in it. */
  const positions = new Map<string, string>()
  /** Watched sheets by key, for decoding. */
  const sheetOfKey = new Map<string, string>()
  let self: string | null = null
  let listener: ((event: BusEvent) => void) | null = null
  let failureCount = 0
  let healthy = true
  let closed = false

  function failed(what: string): void {
    failureCount++
    if (!healthy) return
    healthy = false
    log(`Redis is unreachable (${what}); this instance keeps serving its own connections and tells the others again once it is back`)
  }

  function recovered(): void {
    if (healthy) return
    healthy = true
    log('Redis is reachable again')
  }

  /** The id of a stream's newest entry, or — when Redis does not answer — a time a minute back (duplicates are skipped by seq). */
  async function lastId(key: string): Promise<string> {
    try {
      const newest = await writer.xrevrange(key, '+', '-', 'COUNT', 1)
      recovered()
      return newest.length > 0 ? newest[0][0] : '0-0'
    } catch (err) {
      failed(`reading where ${key} ends: ${(err as Error).message}`)
      return `${Date.now() - 60_000}-0`
    }
  }

  /** Interrupts the blocking read so it starts again with the current set of streams. */
  function interrupt(): void {
    writer
      .pipeline()
      .xadd(wakeKey, 'MAXLEN', 1, '*', F.type, 'wake')
      .pexpire(wakeKey, 600_000)
      .exec()
      .catch((err: Error) => failed(`waking the reader: ${err.message}`))
  }

  function decode(key: string, fields: Buffer[]): BusEvent | null {
    const map = new Map<string, Buffer>()
    for (let i = 0; i + 1 < fields.length; i += 2) map.set(fields[i].toString(), fields[i + 1])
    if (map.get(F.instance)?.toString() === self) return null
    const type = map.get(F.type)?.toString()
    if (type === 'head') {
      const sheetId = sheetOfKey.get(key)
      const seq = Number(map.get(F.seq)?.toString())
      return sheetId && Number.isInteger(seq) ? { type: 'head', sheetId, seq } : null
    }
    const data = map.get(F.data)
    if (!data) return null
    if (key === controlKey) return JSON.parse(data.toString()) as ControlEvent
    const sheetId = sheetOfKey.get(key)
    if (!sheetId) return null
    const update = new Uint8Array(data.buffer, data.byteOffset, data.byteLength)
    if (type === 'update') return { type: 'update', sheetId, update, seq: Number(map.get(F.seq)?.toString()) }
    if (type === 'awareness') return { type: 'awareness', sheetId, update }
    return null
  }

  async function readLoop(): Promise<void> {
    let backoff = 100
    while (!closed) {
      const keys = [...positions.keys()]
      const ids = keys.map((k) => positions.get(k)!)
      let answer: [Buffer, [Buffer, Buffer[]][]][] | null
      try {
        answer = (await reader.xreadBuffer('COUNT', 500, 'BLOCK', blockMs, 'STREAMS', ...keys, ...ids)) as typeof answer
        backoff = 100
        recovered()
      } catch (err) {
        if (closed) return
        failed(`reading: ${(err as Error).message}`)
        await new Promise((r) => setTimeout(r, backoff))
        backoff = Math.min(backoff * 2, 2000)
        continue
      }
      if (!answer) continue
      for (const [keyBuffer, entries] of answer) {
        const key = keyBuffer.toString()
        if (key === wakeKey) {
          positions.set(key, entries[entries.length - 1][0].toString())
          continue
        }
        if (!positions.has(key)) continue // unwatched meanwhile
        for (const [id, fields] of entries) {
          positions.set(key, id.toString())
          let event: BusEvent | null = null
          try {
            event = decode(key, fields)
          } catch (err) {
            log(`an entry of ${key} could not be read: ${(err as Error).message}`)
          }
          if (event && listener) {
            try {
              listener(event)
            } catch (err) {
              log(`an event of ${key} could not be applied: ${(err as Error).message}`)
            }
          }
        }
      }
    }
  }

  // Without Redis at start the control stream is read from a minute back once it comes (the connections retry).
  const ready = lastId(controlKey).then((start) => {
    positions.set(controlKey, start)
    positions.set(wakeKey, '0-0')
    void readLoop()
  })

  function append(key: string, limit: number, fields: (string | Buffer)[], expire: boolean): void {
    const batch = writer.pipeline().xadd(key, 'MAXLEN', '~', limit, '*', ...fields)
    if (expire) batch.pexpire(key, ttlMs)
    batch
      .exec()
      .then((results) => {
        const error = results?.find(([err]) => err)?.[0]
        if (error) failed(`publishing to ${key}: ${error.message}`)
        else recovered()
      })
      .catch((err: Error) => failed(`publishing to ${key}: ${err.message}`))
  }

  return {
    ready,

    publish(instanceId, event) {
      if (closed) return
      switch (event.type) {
        case 'update':
          append(sheetKey(event.sheetId), maxLen, [F.type, 'update', F.instance, instanceId, F.seq, String(event.seq), F.data, Buffer.from(event.update)], true)
          return
        case 'awareness':
          append(sheetKey(event.sheetId), maxLen, [F.type, 'awareness', F.instance, instanceId, F.data, Buffer.from(event.update)], true)
          return
        case 'head':
          append(sheetKey(event.sheetId), maxLen, [F.type, 'head', F.instance, instanceId, F.seq, String(event.seq)], true)
          return
        default:
          append(controlKey, controlMaxLen, [F.type, event.type, F.instance, instanceId, F.data, JSON.stringify(event)], false)
      }
    },

    subscribe(instanceId, onEvent) {
      self = instanceId
      listener = onEvent
      return () => {
        if (listener === onEvent) listener = null
      }
    },

    async watch(sheetId) {
      const key = sheetKey(sheetId)
      if (positions.has(key)) return
      const start = await lastId(key)
      // A second watch of the same sheet may have finished meanwhile: the earlier start point is kept.
      if (positions.has(key) || closed) return
      sheetOfKey.set(key, sheetId)
      positions.set(key, start)
      interrupt()
    },

    unwatch(sheetId) {
      const key = sheetKey(sheetId)
      positions.delete(key)
      sheetOfKey.delete(key)
    },

    failures: () => failureCount,

    async close() {
      if (closed) return
      closed = true
      listener = null
      reader.disconnect()
      await writer.del(wakeKey).catch(() => {})
      await writer.quit().catch(() => writer.disconnect())
    },
  }
}
