/**
 * The document registry: one in-memory Yjs document (and awareness) per open sheet, its peers, and the rule that
 * nothing leaves this process before it is on disk.
 *
 * Write before relay: every accepted change is queued as a row, and every outgoing message — relayed updates, sync
 * answers, awareness — is queued too. `flush()` commits all queued rows in one SQLite transaction and only then sends
 * the queued messages, in order. The transport calls it right after each accepted update (a commit under WAL with
 * synchronous=NORMAL costs tens of microseconds, less than any batching delay would); anything else queued is
 * flushed on the next turn of the event loop (`setImmediate`). A crash before the commit loses only changes nobody
 * else has seen; their authors still hold them and resend them on reconnect. (The transport then holds each
 * receiving socket's frames until the turn ends, so a burst of edits costs one write per receiver: turnWrites.ts.)
 *
 * Compaction on a store that answers at once holds the event loop for a few milliseconds, so under constant typing
 * it waits for a pause (`compactPauseMs`, found by the sweep) unless the log reaches COMPACT_LIMIT_FACTOR times
 * `compactEvery`.
 *
 * A store may answer with a Promise (a network database). The guarantees stay: while a commit is in flight, later
 * flushes, compactions and catch-ups wait their turn (one piece of store work at a time, in order), and its frames are
 * sent only once it has succeeded; a sheet still loading holds the bus events that arrive for it until its document is
 * in memory. A store that answers at once runs exactly today's synchronous path, with no await per update.
 *
 * The registry knows nothing of websockets or roles: the transport (connection.ts) decides what a peer may do and
 * calls in. Other app instances reach it only through the bus (bus.ts, DESIGN §10).
 */
import * as Y from 'yjs'
import * as awarenessProtocol from 'y-protocols/awareness'
import type { CollabBus, BusEvent, ControlEvent } from './bus'
import { isPromise, type CollabStore, type CompactOutcome, type LoadedDocument, type MaybePromise, type PendingRow } from './store'
import { encodeAwarenessEntries, encodeAwarenessMessage, encodeSyncStep1, encodeSyncStep2, encodeUpdateMessage, type AwarenessEntry } from './protocol'

/** The highest seq a document's copy knows of (its state row's cover or a row above it). */
function knownHead(entry: { uptoSeq: number; seqs: readonly number[] }): number {
  let max = entry.uptoSeq
  for (const seq of entry.seqs) if (seq > max) max = seq
  return max
}

/**
 * The seqs right above the state row that this instance holds without a hole: what a compaction may cover. With
 * several instances writing, rows of the others stored but not yet heard of leave holes; compacting up to the first
 * hole keeps the log short under constant typing (the state may hold later rows too: applying them again on load
 * changes nothing). One instance alone always holds them all.
 */
function knownPrefix(uptoSeq: number, seqs: readonly number[]): number[] {
  const sorted = seqs.filter((s) => s > uptoSeq).sort((a, b) => a - b)
  let n = 0
  while (n < sorted.length && sorted[n] === uptoSeq + n + 1) n++
  return n === sorted.length ? sorted : sorted.slice(0, n)
}

/** A sheet deleted while its document was loading. */
export class SheetDeletedError extends Error {
  constructor() {
    super('the sheet was deleted while it loaded')
  }
}

/** What the registry needs from a connection. */
export interface RegistryPeer {
  readonly userId: string
  /** Sends a frame now (the registry calls this only from `flush`). */
  send(frame: Uint8Array): void
  close(code: number, reason: string): void
}

/** Origin of changes made by the server itself (REST import, restore); stored with `userId`. */
export interface ServerOrigin {
  kind: 'server'
  userId: string | null
}
const BUS_ORIGIN = { kind: 'bus' } as const

/** A log this many times `compactEvery` long is compacted at once, pause or not. */
export const COMPACT_LIMIT_FACTOR = 4

export interface RegistryOptions {
  store: CollabStore
  bus: CollabBus
  instanceId: string
  /**
   * Compact once this many rows sit on top of the state row and the document has had no edit for `compactPauseMs`
   * (checked by the sweep), or at once when the rows reach COMPACT_LIMIT_FACTOR times as many.
   */
  compactEvery: number
  /**
   * On a database that answers at once, a compaction holds the event loop (a few ms for 500 rows), so every edit
   * arriving meanwhile waits: it is left for a pause in typing unless the log has grown to the limit. 0: at once.
   * Default 0 here; the server passes 500 ms (index.ts). Compactions of an asynchronous store ride on its commits.
   */
  compactPauseMs?: number
  /** Compact a document with rows after this long without a change. */
  idleCompactMs: number
  /** Drop a document from memory after this long without peers. */
  evictAfterMs: number
  /**
   * How long a hole in the seqs heard from other instances may stay open before the document is caught up from the
   * database (default 2 s): rows of two instances may be published out of seq order, but one whose publication was
   * lost never arrives.
   */
  gapMs?: number
  /** Control events from other instances (membership, deleted sheets) for the transport. */
  onControl?: (event: ControlEvent) => void
  log?: (message: string) => void
}

export interface DocEntry {
  readonly sheetId: string
  readonly doc: Y.Doc
  readonly awareness: awarenessProtocol.Awareness
  /** Each peer with the awareness client ids it controls. */
  readonly peers: Map<RegistryPeer, Set<number>>
  uptoSeq: number
  /** Seqs of stored rows on top of the state row, all reflected in `doc`. */
  seqs: number[]
  lastChangeAt: number
  emptySince: number | null
  /** Set when a store failed: the in-memory document is ahead of the database and must not be used again. */
  broken: boolean
  compactAfter: number
  /** A catch-up from the database is due when this timer fires (a seq heard from another instance left a hole). */
  gapTimer: NodeJS.Timeout | null
  /** An eviction is waiting for store work to finish. */
  unloading: boolean
  /** A compaction of an asynchronous store is waiting or in flight. */
  compacting: boolean
  /** Presence client ids announced through other instances: no peer here may take them over. */
  remote: Set<number>
  /** Callers waiting for the compaction the next flush is to run right after its commit (asynchronous stores). */
  compactWanted: ((compacted: boolean) => void)[] | null
}

/** A sheet whose document is being loaded: the bus events heard for it meanwhile, applied once it is in memory. */
interface Loading {
  promise: Promise<DocEntry>
  events: SheetEvent[]
  /** Deleted while it loaded: the load ends in a refusal instead of a document. */
  dropped: boolean
}
type SheetEvent = Extract<BusEvent, { type: 'update' | 'awareness' | 'head' }>

interface QueuedRow {
  entry: DocEntry
  row: PendingRow
  /** Its seq once an asynchronous commit stored it. */
  seq?: number
  /** Set when the row was handed to the store before it was applied: waits for its commit and gives its seq. */
  finish?: () => number
}

/**
 * A document's state taken when an asynchronous commit began: it holds exactly the rows known then and the rows of
 * that commit, so it may cover them once the commit has succeeded, however much was typed meanwhile.
 */
interface Snapshot {
  entry: DocEntry
  state: Uint8Array
  known: number[]
  rows: QueuedRow[]
  waiters: ((compacted: boolean) => void)[]
}

/** A row handed to the store before its update is applied: queued once the document reports the change. */
interface EarlyRow {
  entry: DocEntry
  row: PendingRow
  finish: () => number
  queued: boolean
  /** The part Yjs integrated, as the document reported it. */
  integrated: Uint8Array | null
}

/** A frame for one peer, or for every peer of the document but one (`except`, the sender of a relayed update). */
type QueuedSend = { entry: DocEntry; frame: Uint8Array } & ({ peer: RegistryPeer } | { peer: null; except: unknown })

export interface RegistryCounters {
  documentsLoaded: number
  rowsStored: number
  /** Rows committed by SQLite's append worker beside the apply (appendWorker.ts); included in rowsStored. */
  rowsAppendedBeside: number
  messagesRelayed: number
  compactions: number
  compactionsSkipped: number
  evictions: number
  storeFailures: number
  busFailures: number
  flushes: number
  /** Documents brought up to date from the database after a seq heard from another instance left a hole. */
  catchUps: number
}

export class DocumentRegistry {
  private readonly entries = new Map<string, DocEntry>()
  private rows: QueuedRow[] = []
  /** The writer's update being applied while its row is committed beside it (applyUpdate). */
  private early: EarlyRow | null = null
  private sends: QueuedSend[] = []
  private flushScheduled: NodeJS.Immediate | null = null
  private readonly loading = new Map<string, Loading>()
  /** The store work in flight (a commit, a compaction or a catch-up of an asynchronous store), or null. */
  private busy: Promise<void> | null = null
  /** Work that waits for the store work in flight, run in order once it settles. */
  private waiting: (() => void)[] = []
  private flushWaiting = false
  /** The store has answered with a Promise at least once. */
  private asyncStore = false
  private readonly unsubscribe: () => void
  private closed = false
  readonly counters: RegistryCounters = {
    documentsLoaded: 0,
    rowsStored: 0,
    rowsAppendedBeside: 0,
    messagesRelayed: 0,
    compactions: 0,
    compactionsSkipped: 0,
    evictions: 0,
    storeFailures: 0,
    busFailures: 0,
    flushes: 0,
    catchUps: 0,
  }

  constructor(private readonly options: RegistryOptions) {
    this.unsubscribe = options.bus.subscribe(options.instanceId, (event) => this.onBusEvent(event))
  }

  /**
   * The loaded entry for a sheet, loading it (state + remaining rows) when it is not in memory: at once from a
   * synchronous store, else a Promise shared by everyone opening the sheet meanwhile. The bus starts watching the
   * sheet before the load, so no event published after the database was read is missed (and older ones are skipped
   * by seq).
   */
  open(sheetId: string): MaybePromise<DocEntry> {
    const existing = this.entries.get(sheetId)
    if (existing) return existing
    const pending = this.loading.get(sheetId)
    if (pending) return pending.promise
    const watched = this.options.bus.watch?.(sheetId)
    if (watched === undefined || !isPromise(watched)) {
      const loaded = this.options.store.loadDocument(sheetId)
      if (!isPromise(loaded)) return this.install(sheetId, loaded)
      return this.track(sheetId, loaded)
    }
    return this.track(
      sheetId,
      watched.then(() => this.options.store.loadDocument(sheetId)),
    )
  }

  /** Holds the bus events of a sheet while its document loads; on failure the sheet is not watched any more. */
  private track(sheetId: string, load: Promise<LoadedDocument>): Promise<DocEntry> {
    const pending: Loading = { promise: null as unknown as Promise<DocEntry>, events: [], dropped: false }
    pending.promise = load.then(
      (loaded) => {
        this.loading.delete(sheetId)
        if (this.closed) throw new Error('the collaboration server is shutting down')
        if (pending.dropped) {
          this.options.bus.unwatch?.(sheetId)
          throw new SheetDeletedError()
        }
        const entry = this.install(sheetId, loaded)
        for (const event of pending.events) this.onSheetEvent(entry, event)
        return entry
      },
      (err: unknown) => {
        this.loading.delete(sheetId)
        if (!this.entries.has(sheetId)) this.options.bus.unwatch?.(sheetId)
        throw err
      },
    )
    this.loading.set(sheetId, pending)
    return pending.promise
  }

  private install(sheetId: string, loaded: LoadedDocument): DocEntry {
    const doc = loaded.doc
    const awareness = new awarenessProtocol.Awareness(doc)
    awareness.setLocalState(null)
    const entry: DocEntry = {
      sheetId,
      doc,
      awareness,
      peers: new Map(),
      uptoSeq: loaded.uptoSeq,
      seqs: loaded.seqs,
      lastChangeAt: Date.now(),
      emptySince: Date.now(),
      broken: false,
      compactAfter: 0,
      gapTimer: null,
      unloading: false,
      compacting: false,
      compactWanted: null,
      remote: new Set(),
    }
    doc.on('update', (update: Uint8Array, origin: unknown) => this.onDocUpdate(entry, update, origin))
    awareness.on('update', (changes: { added: number[]; updated: number[]; removed: number[] }, origin: unknown) =>
      this.onAwarenessUpdate(entry, changes, origin),
    )
    this.entries.set(sheetId, entry)
    this.counters.documentsLoaded++
    // A long log (written by an older build, or a crash before compaction) is compacted right after the first flush.
    if (entry.seqs.length >= this.options.compactEvery) this.scheduleFlush()
    const head = knownHead(entry)
    if (head > 0) this.publish({ type: 'head', sheetId, seq: head })
    return entry
  }

  get(sheetId: string): DocEntry | undefined {
    return this.entries.get(sheetId)
  }

  /** Adds a peer. Writers get the server's sync step 1 (so they send what the server lacks); everyone gets presence. */
  join(entry: DocEntry, peer: RegistryPeer, asWriter: boolean): void {
    entry.peers.set(peer, new Set())
    entry.emptySince = null
    if (asWriter) this.queueSend(entry, peer, encodeSyncStep1(entry.doc))
    this.sendAwarenessStates(entry, peer)
  }

  /** Removes a peer and the presence it controlled. */
  leave(entry: DocEntry, peer: RegistryPeer): void {
    const controlled = entry.peers.get(peer)
    if (!controlled) return
    entry.peers.delete(peer)
    if (controlled.size > 0) awarenessProtocol.removeAwarenessStates(entry.awareness, [...controlled], null)
    if (entry.peers.size === 0) entry.emptySince = Date.now()
  }

  /** Asks a peer that just became a writer for what it has that the server lacks. */
  requestState(entry: DocEntry, peer: RegistryPeer): void {
    this.queueSend(entry, peer, encodeSyncStep1(entry.doc))
  }

  /** Answers a sync step 1 with everything the peer's state vector lacks. */
  answerSyncStep1(entry: DocEntry, peer: RegistryPeer, stateVector: Uint8Array): void {
    this.queueSend(entry, peer, encodeSyncStep2(entry.doc, stateVector))
  }

  /**
   * Applies a writer's update (already checked to parse). The document's `update` event queues the integrated change
   * for storage and relay; a part Yjs parks as pending (its dependencies are missing) is stored as the raw update, so
   * whatever a later sync answer may carry is on disk too. `asSent`: a writer's own edit (not a sync answer), which
   * SQLite's append worker may store as sent while it is applied.
   */
  applyUpdate(entry: DocEntry, peer: RegistryPeer | ServerOrigin, update: Uint8Array, asSent = false): void {
    const store = entry.doc.store
    const pendingStructs = store.pendingStructs
    const pendingDs = store.pendingDs
    // SQLite's append worker: a writer's update is committed beside the apply, and waited for before anything is
    // relayed (commit, in flush). Stored as sent, even when Yjs had nothing new from it or parked it as pending (as
    // below), so the log knows its seq. A sync answer goes the ordinary way: it may repeat the whole document.
    const beginAppend = asSent ? this.options.store.beginAppend : undefined
    const row = beginAppend && { sheetId: entry.sheetId, update, userId: peer.userId }
    const finish = row && beginAppend.call(this.options.store, row)
    if (row && finish) {
      const early: EarlyRow = { entry, row, finish, queued: false, integrated: null }
      this.early = early
      try {
        Y.applyUpdate(entry.doc, update, peer)
      } catch (err) {
        // Take the row back; what Yjs integrated before it threw is kept as an ordinary row.
        this.rows = this.rows.filter((r) => r.finish !== finish)
        try {
          this.options.store.discardRow?.(entry.sheetId, finish())
        } catch {
          // its commit failed: nothing to take back
        }
        if (early.integrated) this.rows.push({ entry, row: { ...row, update: early.integrated } })
        throw err
      } finally {
        this.early = null
      }
      if (!early.queued) {
        this.rows.push({ entry, row, finish })
        this.scheduleFlush()
      }
      return
    }
    Y.applyUpdate(entry.doc, update, peer)
    if ((store.pendingStructs !== pendingStructs && store.pendingStructs !== null) || (store.pendingDs !== pendingDs && store.pendingDs !== null))
      this.queueRow(entry, update, peer.userId)
  }

  /**
   * Applies presence entries from a peer. A peer controls the first client id it announces and no other; an id
   * already controlled by another peer is refused. Entries no newer than what the server holds are skipped silently:
   * the stock client echoes every presence change it hears, others' included. Returns how many entries were refused.
   */
  applyAwareness(entry: DocEntry, peer: RegistryPeer, entries: readonly AwarenessEntry[]): number {
    const controlled = entry.peers.get(peer)
    if (!controlled) return entries.length
    const accepted: AwarenessEntry[] = []
    let refused = 0
    for (const e of entries) {
      if (controlled.has(e.clientId)) {
        accepted.push(e)
        continue
      }
      const known = entry.awareness.meta.get(e.clientId)
      const claim = controlled.size === 0 && e.state !== null && !this.controlledByOther(entry, peer, e.clientId) && !entry.remote.has(e.clientId)
      if (known && known.clock >= e.clock) {
        // A reconnecting client announces its state at the clock it had, which the removal on its old connection's
        // close went past: lift it above the known clock (the client adopts the echoed clock), or it would stay
        // hidden until its renewals catch up, up to 30 s.
        if (claim && !entry.awareness.states.has(e.clientId)) {
          controlled.add(e.clientId)
          accepted.push({ ...e, clock: known.clock + 1 })
        }
        continue
      }
      if (claim) {
        controlled.add(e.clientId)
        accepted.push(e)
      } else refused++
    }
    if (accepted.length > 0) awarenessProtocol.applyAwarenessUpdate(entry.awareness, encodeAwarenessEntries(accepted), peer)
    return refused
  }

  /** Sends a peer every presence state the server knows (the answer to an awareness query, and on join). */
  sendAwarenessStates(entry: DocEntry, peer: RegistryPeer): void {
    const clients = [...entry.awareness.getStates().keys()]
    if (clients.length > 0) this.queueSend(entry, peer, encodeAwarenessMessage(entry.awareness, clients))
  }

  /** Queues a frame for one peer, sent after the pending rows are committed. */
  queueSend(entry: DocEntry, peer: RegistryPeer, frame: Uint8Array): void {
    this.sends.push({ entry, peer, frame })
    this.scheduleFlush()
  }

  /**
   * A change made by the server (REST import, restore): applied, stored and relayed like a writer's — synchronously
   * over a synchronous store, else the Promise settles once it is stored.
   */
  change(sheetId: string, mutate: (doc: Y.Doc) => void, userId: string | null): MaybePromise<void> {
    const opened = this.open(sheetId)
    if (isPromise(opened)) return opened.then((entry) => this.changeIn(entry, mutate, userId))
    return this.changeIn(opened, mutate, userId)
  }

  private changeIn(entry: DocEntry, mutate: (doc: Y.Doc) => void, userId: string | null): MaybePromise<void> {
    const origin: ServerOrigin = { kind: 'server', userId }
    entry.doc.transact(() => mutate(entry.doc), origin)
    this.flush()
    const check = () => {
      if (entry.broken) throw new Error('the change could not be saved')
    }
    if (this.busy) return this.settled().then(check)
    check()
  }

  /** Settles once no store work is in flight or waiting (asynchronous stores; at once otherwise). */
  async settled(): Promise<void> {
    while (this.busy) await this.busy
  }

  /** Forgets a sheet at once (deleted): queued rows and frames for it are dropped, its peers closed. */
  drop(sheetId: string, code: number, reason: string): void {
    const loading = this.loading.get(sheetId)
    if (loading) loading.dropped = true
    const entry = this.entries.get(sheetId)
    if (!entry) return
    this.rows = this.rows.filter((r) => r.entry !== entry)
    this.sends = this.sends.filter((s) => s.entry !== entry)
    for (const peer of [...entry.peers.keys()]) peer.close(code, reason)
    this.destroy(entry)
  }

  /** Commits queued rows, then sends queued frames; compacts documents whose log has grown. */
  flush(): void {
    if (this.flushScheduled) {
      clearImmediate(this.flushScheduled)
      this.flushScheduled = null
    }
    if (this.busy) {
      // An asynchronous commit is in flight: these rows and frames follow it, in order, as one more group.
      if (!this.flushWaiting) {
        this.flushWaiting = true
        this.waiting.push(() => {
          this.flushWaiting = false
          this.flush()
        })
      }
      return
    }
    const rows = this.rows
    const sends = this.sends
    this.rows = []
    this.sends = []
    if (rows.length > 0 || sends.length > 0) this.counters.flushes++
    const stored = this.commit(rows)
    if (isPromise(stored)) {
      this.asyncStore = true
      // Still the same turn of the event loop: the documents hold exactly the stored rows and this commit's.
      const snapshots = this.snapshots(rows)
      this.hold(stored.then((entries) => this.delivered(entries, sends, snapshots)))
      return
    }
    void this.delivered(stored, sends)
  }

  /** The documents of an asynchronous commit that are to be compacted right after it. */
  private snapshots(rows: QueuedRow[]): Snapshot[] {
    const byEntry = new Map<DocEntry, QueuedRow[]>()
    for (const r of rows) {
      const list = byEntry.get(r.entry)
      if (list) list.push(r)
      else byEntry.set(r.entry, [r])
    }
    const out: Snapshot[] = []
    const now = Date.now()
    for (const [entry, batch] of byEntry) {
      const waiters = entry.compactWanted
      entry.compactWanted = null
      const grown = entry.seqs.length + batch.length >= this.options.compactEvery && now >= entry.compactAfter
      if (entry.broken || entry.compacting || (!waiters && !grown)) {
        for (const w of waiters ?? []) w(false)
        continue
      }
      out.push({ entry, state: Y.encodeStateAsUpdate(entry.doc), known: entry.seqs.slice(), rows: batch, waiters: waiters ?? [] })
    }
    return out
  }

  /** Compacts each snapshot over the rows known when it was taken and the rows its commit stored. */
  private compactSnapshots(snapshots: Snapshot[]): Promise<void> | void {
    const runs: Promise<unknown>[] = []
    for (const snap of snapshots) {
      const { entry } = snap
      const stored = snap.rows.filter((r) => r.seq !== undefined).map((r) => r.seq!)
      const covered = entry.broken || this.entries.get(entry.sheetId) !== entry ? [] : knownPrefix(entry.uptoSeq, [...snap.known, ...stored])
      if (covered.length === 0 || covered.length * 2 < snap.known.length + stored.length) {
        for (const w of snap.waiters) w(false)
        continue
      }
      const done = this.runCompaction(entry, snap.state, covered)
      if (isPromise(done)) runs.push(done.then((ok) => snap.waiters.forEach((w) => w(ok))))
      else for (const w of snap.waiters) w(done)
    }
    if (runs.length > 0) return Promise.all(runs).then(() => {})
  }

  /** After a commit: sends the frames queued with it, then compacts what has grown. */
  private delivered(stored: Set<DocEntry>, sends: QueuedSend[], snapshots?: Snapshot[]): Promise<void> | void {
    for (const send of sends) {
      const { entry, frame, peer } = send
      if (entry.broken) continue
      if (peer === null) {
        const except = 'except' in send ? send.except : undefined
        for (const other of entry.peers.keys())
          if (other !== except) {
            other.send(frame)
            this.counters.messagesRelayed++
          }
      } else if (entry.peers.has(peer)) {
        peer.send(frame)
        this.counters.messagesRelayed++
      }
    }
    if (snapshots) {
      // An asynchronous commit: documents it wrote to are compacted from their snapshots, as part of this store work.
      for (const entry of this.entries.values())
        if (entry.seqs.length >= this.options.compactEvery && !stored.has(entry)) void this.compact(entry)
      return this.compactSnapshots(snapshots)
    }
    const now = Date.now()
    for (const entry of stored) if (this.compactionDue(entry, now)) void this.compact(entry)
    for (const entry of this.entries.values()) if (!stored.has(entry) && this.compactionDue(entry, now)) void this.compact(entry)
  }

  /**
   * A compaction is due: the log is long and, on a store that answers at once, typing has paused or the log has
   * reached the limit. An asynchronous store's compactions do not hold the event loop: they are due at the threshold.
   */
  private compactionDue(entry: DocEntry, now: number): boolean {
    const rows = entry.seqs.length
    const every = this.options.compactEvery
    if (rows < every) return false
    if (this.asyncStore) return true
    return rows >= every * COMPACT_LIMIT_FACTOR || now - entry.lastChangeAt >= (this.options.compactPauseMs ?? 0)
  }

  /**
   * Writes the document's state and deletes the rows it covers (one transaction). With an asynchronous store it never
   * overlaps a commit: it waits for the one in flight, and later commits wait for it. The answer is whether it
   * compacted (false while it is still running: the Promise, when one is returned, settles with the outcome).
   */
  compact(entry: DocEntry): boolean | Promise<boolean> {
    if (entry.broken || entry.compacting || entry.seqs.length === 0 || Date.now() < entry.compactAfter) return false
    const pending = this.rows.some((r) => r.entry === entry)
    // Rows typed and not yet stored: with an asynchronous store the next commit takes them and snapshots the document.
    if (pending && (this.busy || this.asyncStore)) return this.compactWithNextFlush(entry)
    if (this.busy) return this.compactLater(entry)
    if (pending) {
      this.flush()
      if (this.busy) return this.compactLater(entry)
      if (entry.broken || entry.seqs.length === 0) return false
    }
    if (this.entries.get(entry.sheetId) !== entry) return false
    const covered = knownPrefix(entry.uptoSeq, entry.seqs)
    // Most rows known here lie beyond a hole (another instance's rows not heard of yet): wait for it to fill.
    if (covered.length * 2 < entry.seqs.length) return false
    const done = this.runCompaction(entry, Y.encodeStateAsUpdate(entry.doc), covered)
    if (isPromise(done)) this.hold(done)
    return done
  }

  private runCompaction(entry: DocEntry, state: Uint8Array, covered: number[]): boolean | Promise<boolean> {
    let outcome
    try {
      outcome = this.options.store.compact(entry.sheetId, state, entry.uptoSeq, covered)
    } catch (err) {
      return this.compactFailed(entry, err)
    }
    if (!isPromise(outcome)) return this.compacted(entry, outcome)
    entry.compacting = true
    return outcome
      .then(
        (o) => this.compacted(entry, o),
        (err: unknown) => this.compactFailed(entry, err),
      )
      .finally(() => (entry.compacting = false))
  }

  private compactWithNextFlush(entry: DocEntry): Promise<boolean> {
    return new Promise<boolean>((resolve) => {
      ;(entry.compactWanted ??= []).push(resolve)
      this.flush()
    })
  }

  private compactLater(entry: DocEntry): Promise<boolean> {
    entry.compacting = true
    return this.after(() => {
      entry.compacting = false
      return this.compact(entry)
    })
  }

  /** Runs `work` once the store work in flight has settled; settles with its answer. */
  private after<T>(work: () => T | Promise<T>): Promise<T> {
    return new Promise<T>((resolve, reject) => {
      this.waiting.push(() => {
        try {
          const out = work()
          if (isPromise(out)) out.then(resolve, reject)
          else resolve(out)
        } catch (err) {
          reject(err as Error)
        }
      })
    })
  }

  /** Marks asynchronous store work in flight; when it settles, the work waiting behind it runs in order. */
  private hold(work: Promise<unknown>): void {
    const run = work.then(
      () => {},
      (err: unknown) => this.options.log?.(`store work failed: ${(err as Error).message}`),
    )
    this.busy = run.then(() => {
      this.busy = null
      while (!this.busy && this.waiting.length > 0) this.waiting.shift()!()
    })
  }

  private compactFailed(entry: DocEntry, err: unknown): false {
    this.options.log?.(`compaction of sheet ${entry.sheetId} failed: ${(err as Error).message}`)
    entry.compactAfter = Date.now() + this.options.idleCompactMs
    this.counters.compactionsSkipped++
    return false
  }

  private compacted(entry: DocEntry, outcome: CompactOutcome): boolean {
    if (outcome.ok) {
      entry.uptoSeq = outcome.uptoSeq
      entry.seqs = entry.seqs.filter((s) => s > outcome.uptoSeq)
      this.counters.compactions++
      return true
    }
    // Another instance compacted or wrote rows this one has not seen: keep every row, retry later.
    this.options.log?.(`compaction of sheet ${entry.sheetId} skipped: ${outcome.reason}`)
    if (outcome.uptoSeq > entry.uptoSeq) {
      entry.uptoSeq = outcome.uptoSeq
      entry.seqs = entry.seqs.filter((s) => s > outcome.uptoSeq)
    }
    this.watchGap(entry)
    entry.compactAfter = Date.now() + this.options.idleCompactMs
    this.counters.compactionsSkipped++
    return false
  }

  /** Periodic work: compact idle documents and long logs after a pause in typing, evict documents without peers. */
  sweep(now = Date.now()): void {
    for (const entry of [...this.entries.values()]) {
      if (entry.seqs.length > 0 && now - entry.lastChangeAt >= this.options.idleCompactMs) void this.compact(entry)
      else if (!this.asyncStore && this.compactionDue(entry, now)) void this.compact(entry)
      if (entry.peers.size === 0 && entry.emptySince !== null && now - entry.emptySince >= this.options.evictAfterMs) this.evict(entry)
    }
  }

  /**
   * Compacts (when needed) and drops a document from memory. With an asynchronous store the document stays until its
   * rows are stored and compacted, and stays for good if someone joins it meanwhile.
   */
  evict(entry: DocEntry): void {
    if (entry.unloading) return
    this.flush()
    if (this.busy) {
      entry.unloading = true
      void this.after(() => this.evictNow(entry, true))
      return
    }
    this.evictNow(entry, false)
  }

  private evictNow(entry: DocEntry, deferred: boolean): void {
    if (deferred && !this.stillEvicting(entry)) return
    if (entry.seqs.length > 0) {
      entry.compactAfter = 0
      const done = this.compact(entry)
      if (isPromise(done)) {
        entry.unloading = true
        void done.then(() => {
          if (this.stillEvicting(entry)) this.unload(entry)
        })
        return
      }
    }
    this.unload(entry)
  }

  private stillEvicting(entry: DocEntry): boolean {
    entry.unloading = false
    return this.entries.get(entry.sheetId) === entry && entry.peers.size === 0
  }

  private unload(entry: DocEntry): void {
    for (const peer of [...entry.peers.keys()]) peer.close(1001, 'the document was unloaded')
    this.destroy(entry)
    this.counters.evictions++
  }

  sheets(): DocEntry[] {
    return [...this.entries.values()]
  }

  /** Flushes, compacts every document with rows and frees them all (a Promise while an asynchronous store works). */
  close(): MaybePromise<void> {
    if (this.closed) return
    this.closed = true
    this.flush()
    if (this.busy) return this.settled().then(() => this.closeAll())
    return this.closeAll()
  }

  private closeAll(): MaybePromise<void> {
    const waits: Promise<unknown>[] = []
    for (const entry of [...this.entries.values()]) {
      if (entry.seqs.length > 0) {
        entry.compactAfter = 0
        const done = this.compact(entry)
        if (isPromise(done)) {
          waits.push(done.then(() => this.destroy(entry)))
          continue
        }
      }
      this.destroy(entry)
    }
    this.unsubscribe()
    if (waits.length > 0) return Promise.all(waits).then(() => {})
  }

  private controlledByOther(entry: DocEntry, peer: RegistryPeer, clientId: number): boolean {
    for (const [other, ids] of entry.peers) if (other !== peer && ids.has(clientId)) return true
    return false
  }

  private destroy(entry: DocEntry): void {
    if (this.entries.get(entry.sheetId) === entry) {
      this.entries.delete(entry.sheetId)
      this.options.bus.unwatch?.(entry.sheetId)
    }
    if (entry.gapTimer) clearTimeout(entry.gapTimer)
    entry.gapTimer = null
    entry.peers.clear()
    entry.awareness.destroy()
    entry.doc.destroy()
  }

  private scheduleFlush(): void {
    if (!this.flushScheduled && !this.closed) this.flushScheduled = setImmediate(() => this.flush())
  }

  private queueRow(entry: DocEntry, update: Uint8Array, userId: string | null): void {
    const early = this.early
    if (early && early.entry === entry && !early.queued) {
      // the writer's row already handed to the append worker stands for this change
      early.queued = true
      early.integrated = update
      this.rows.push({ entry, row: early.row, finish: early.finish })
    } else this.rows.push({ entry, row: { sheetId: entry.sheetId, update, userId } })
    entry.lastChangeAt = Date.now()
    this.scheduleFlush()
  }

  private onDocUpdate(entry: DocEntry, update: Uint8Array, origin: unknown): void {
    if (origin !== BUS_ORIGIN) {
      const userId = origin && typeof origin === 'object' && 'userId' in origin ? ((origin as { userId: string | null }).userId ?? null) : null
      this.queueRow(entry, update, userId)
    }
    this.sends.push({ entry, frame: encodeUpdateMessage(update), peer: null, except: origin })
    this.scheduleFlush()
  }

  private onAwarenessUpdate(entry: DocEntry, changes: { added: number[]; updated: number[]; removed: number[] }, origin: unknown): void {
    const clients = [...changes.added, ...changes.updated, ...changes.removed]
    if (clients.length === 0) return
    if (origin === BUS_ORIGIN) for (const id of [...changes.added, ...changes.updated]) entry.remote.add(id)
    for (const id of changes.removed) entry.remote.delete(id)
    const frame = encodeAwarenessMessage(entry.awareness, clients)
    // Everyone, the sender included: a reader's own echo is what keeps its otherwise silent link alive.
    this.sends.push({ entry, frame, peer: null, except: null })
    this.scheduleFlush()
    if (origin !== BUS_ORIGIN && !entry.broken)
      this.publish({ type: 'awareness', sheetId: entry.sheetId, update: awarenessProtocol.encodeAwarenessUpdate(entry.awareness, clients) })
  }

  /**
   * Tells the other instances. A bus that fails costs them this event (they catch up from the database when they next
   * load the sheet), never this instance's stored rows or its peers.
   */
  private publish(event: BusEvent): void {
    try {
      this.options.bus.publish(this.options.instanceId, event)
    } catch (err) {
      this.counters.busFailures++
      this.options.log?.(`could not tell other instances about ${event.type} of sheet ${'sheetId' in event ? event.sheetId : '?'}: ${(err as Error).message}`)
    }
  }

  /** Stores rows in one transaction (per sheet on failure, so one bad sheet cannot sink the others). */
  private commit(rows: QueuedRow[]): MaybePromise<Set<DocEntry>> {
    const stored = new Set<DocEntry>()
    if (rows.length === 0) return stored
    // Rows already handed to SQLite's append worker: their commits are waited for here, before anything is sent.
    for (const r of rows)
      if (r.finish) {
        try {
          const seq = r.finish()
          r.seq = seq
          this.counters.rowsAppendedBeside++
          if (!r.entry.broken) this.recordStored([r], [seq], stored)
        } catch (err) {
          this.storeFailed([r], err)
        }
      }
    const live = rows.filter((r) => !r.entry.broken && !r.finish)
    if (live.length === 0) return stored
    let seqs: MaybePromise<number[]> | null
    try {
      seqs = this.options.store.storeUpdates(live.map((r) => r.row))
    } catch {
      seqs = null
    }
    if (seqs && isPromise(seqs))
      return seqs.then(
        (s) => {
          live.forEach((r, i) => (r.seq = s[i]))
          this.recordStored(live, s, stored)
          return stored
        },
        () => this.commitBySheet(live, stored),
      )
    if (seqs) {
      this.recordStored(live, seqs, stored)
      return stored
    }
    return this.commitBySheet(live, stored)
  }

  /** After a failed group commit: each sheet's rows on their own, so one bad sheet cannot sink the others. */
  private commitBySheet(live: QueuedRow[], stored: Set<DocEntry>): MaybePromise<Set<DocEntry>> {
    const bySheet = new Map<DocEntry, QueuedRow[]>()
    for (const r of live) bySheet.set(r.entry, [...(bySheet.get(r.entry) ?? []), r])
    const waits: Promise<void>[] = []
    for (const batch of bySheet.values()) {
      let batchSeqs: MaybePromise<number[]>
      try {
        batchSeqs = this.options.store.storeUpdates(batch.map((r) => r.row))
      } catch (err) {
        this.storeFailed(batch, err)
        continue
      }
      if (isPromise(batchSeqs))
        waits.push(
          batchSeqs.then((s) => {
            batch.forEach((r, i) => (r.seq = s[i]))
            this.recordStored(batch, s, stored)
          },
            (err: unknown) => this.storeFailed(batch, err),
          ),
        )
      else this.recordStored(batch, batchSeqs, stored)
    }
    return waits.length > 0 ? Promise.all(waits).then(() => stored) : stored
  }

  private storeFailed(batch: QueuedRow[], err: unknown): void {
    const entry = batch[0].entry
    this.counters.storeFailures++
    this.options.log?.(`could not store ${batch.length} update(s) of sheet ${entry.sheetId}: ${(err as Error).message}`)
    this.breakEntry(entry)
  }

  private recordStored(rows: QueuedRow[], seqs: number[], stored: Set<DocEntry>): void {
    rows.forEach((r, i) => {
      r.entry.seqs.push(seqs[i])
      stored.add(r.entry)
      this.publish({ type: 'update', sheetId: r.row.sheetId, update: r.row.update, seq: seqs[i] })
    })
    // a seq of our own above a hole: another instance's rows whose publication has not arrived (or never will)
    for (const entry of stored) this.watchGap(entry)
    this.counters.rowsStored += rows.length
  }

  /** The in-memory document holds changes the database refused: close its peers (they resync on reconnect) and unload it. */
  private breakEntry(entry: DocEntry): void {
    entry.broken = true
    for (const peer of [...entry.peers.keys()]) peer.close(1011, 'the change could not be saved; reconnecting')
    this.destroy(entry)
  }

  private onBusEvent(event: BusEvent): void {
    if (event.type === 'membership' || event.type === 'sheet-deleted' || event.type === 'sessions' || event.type === 'comment') {
      this.options.onControl?.(event)
      return
    }
    const entry = this.entries.get(event.sheetId)
    if (!entry) {
      // Heard while the sheet loads: applied once its document is in memory.
      this.loading.get(event.sheetId)?.events.push(event)
      return
    }
    if (!entry.broken) this.onSheetEvent(entry, event)
  }

  private onSheetEvent(entry: DocEntry, event: SheetEvent): void {
    if (event.type === 'awareness') {
      awarenessProtocol.applyAwarenessUpdate(entry.awareness, event.update, BUS_ORIGIN)
      return
    }
    if (event.type === 'head') {
      // the database holds rows this copy never heard of (their publication was lost): read them now
      if (event.seq > knownHead(entry)) this.catchUp(entry)
      return
    }
    // A row this document already holds (from its load, or heard twice) is skipped. One the state row covers is
    // applied all the same: Yjs ignores what it has, and an instance that adopted another's compaction may lack it.
    if (entry.seqs.includes(event.seq)) return
    Y.applyUpdate(entry.doc, event.update, BUS_ORIGIN)
    if (event.seq > entry.uptoSeq) {
      entry.seqs.push(event.seq)
      this.watchGap(entry)
    }
  }

  /** Seqs known here run without a hole from the state row up. */
  private contiguous(entry: DocEntry): boolean {
    return knownHead(entry) - entry.uptoSeq === entry.seqs.length
  }

  /** A hole that outlasts `gapMs` means a row was stored but its publication never reached us: catch up. */
  private watchGap(entry: DocEntry): void {
    if (entry.gapTimer || this.contiguous(entry)) return
    entry.gapTimer = setTimeout(() => {
      entry.gapTimer = null
      if (this.entries.get(entry.sheetId) === entry && !entry.broken && !this.contiguous(entry)) this.catchUp(entry)
    }, this.options.gapMs ?? 2000)
    entry.gapTimer.unref()
  }

  /**
   * Brings a document up to date from the database (state and rows it lacks), relaying what was missing to its
   * peers. Runs as store work, so no commit of this instance is in flight meanwhile.
   */
  catchUp(entry: DocEntry): void {
    const run = () => {
      if (this.entries.get(entry.sheetId) !== entry || entry.broken) return
      let loaded: MaybePromise<LoadedDocument>
      try {
        loaded = this.options.store.loadDocument(entry.sheetId)
      } catch (err) {
        this.options.log?.(`could not catch sheet ${entry.sheetId} up: ${(err as Error).message}`)
        return
      }
      if (isPromise(loaded)) this.hold(loaded.then((l) => this.merge(entry, l)))
      else this.merge(entry, loaded)
    }
    if (this.busy) void this.after(run)
    else run()
  }

  private merge(entry: DocEntry, loaded: LoadedDocument): void {
    if (this.entries.get(entry.sheetId) !== entry || entry.broken) return
    Y.applyUpdate(entry.doc, Y.encodeStateAsUpdate(loaded.doc), BUS_ORIGIN)
    loaded.doc.destroy()
    if (loaded.uptoSeq > entry.uptoSeq) {
      entry.uptoSeq = loaded.uptoSeq
      entry.seqs = entry.seqs.filter((s) => s > loaded.uptoSeq)
    }
    const known = new Set(entry.seqs)
    for (const seq of loaded.seqs) if (seq > entry.uptoSeq && !known.has(seq)) entry.seqs.push(seq)
    this.counters.catchUps++
  }
}
