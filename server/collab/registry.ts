/**
 * The document registry: one in-memory Yjs document (and awareness) per open sheet, its peers, and the rule that
 * nothing leaves this process before it is on disk.
 *
 * Write before relay: every accepted change is queued as a row, and every outgoing message — relayed updates, sync
 * answers, awareness — is queued too. `flush()` commits all queued rows in one SQLite transaction and only then sends
 * the queued messages, in order. The transport calls it right after each accepted update (a commit under WAL with
 * synchronous=NORMAL costs tens of microseconds, less than any batching delay would); anything else queued is
 * flushed on the next turn of the event loop (`setImmediate`). A crash before the commit loses only changes nobody
 * else has seen; their authors still hold them and resend them on reconnect.
 *
 * The registry knows nothing of websockets or roles: the transport (connection.ts) decides what a peer may do and
 * calls in. Other app instances reach it only through the bus (bus.ts, DESIGN §10).
 */
import * as Y from 'yjs'
import * as awarenessProtocol from 'y-protocols/awareness'
import type { CollabBus, BusEvent } from './bus'
import type { CollabStore, PendingRow } from './store'
import { encodeAwarenessEntries, encodeAwarenessMessage, encodeSyncStep1, encodeSyncStep2, encodeUpdateMessage, type AwarenessEntry } from './protocol'

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

export interface RegistryOptions {
  store: CollabStore
  bus: CollabBus
  instanceId: string
  /** Compact once this many rows sit on top of the state row. */
  compactEvery: number
  /** Compact a document with rows after this long without a change. */
  idleCompactMs: number
  /** Drop a document from memory after this long without peers. */
  evictAfterMs: number
  /** Control events from other instances (membership, deleted sheets) for the transport. */
  onControl?: (event: Extract<BusEvent, { type: 'membership' | 'sheet-deleted' | 'sessions' }>) => void
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
}

interface QueuedRow {
  entry: DocEntry
  row: PendingRow
}
/** A frame for one peer, or for every peer of the document but one (`except`, the sender of a relayed update). */
type QueuedSend = { entry: DocEntry; frame: Uint8Array } & ({ peer: RegistryPeer } | { peer: null; except: unknown })

export interface RegistryCounters {
  documentsLoaded: number
  rowsStored: number
  messagesRelayed: number
  compactions: number
  compactionsSkipped: number
  evictions: number
  storeFailures: number
  busFailures: number
  flushes: number
}

export class DocumentRegistry {
  private readonly entries = new Map<string, DocEntry>()
  private rows: QueuedRow[] = []
  private sends: QueuedSend[] = []
  private flushScheduled: NodeJS.Immediate | null = null
  private readonly unsubscribe: () => void
  private closed = false
  readonly counters: RegistryCounters = {
    documentsLoaded: 0,
    rowsStored: 0,
    messagesRelayed: 0,
    compactions: 0,
    compactionsSkipped: 0,
    evictions: 0,
    storeFailures: 0,
    busFailures: 0,
    flushes: 0,
  }

  constructor(private readonly options: RegistryOptions) {
    this.unsubscribe = options.bus.subscribe(options.instanceId, (event) => this.onBusEvent(event))
  }

  /** The loaded entry for a sheet, loading it (state + remaining rows, synchronously) when it is not in memory. */
  open(sheetId: string): DocEntry {
    const existing = this.entries.get(sheetId)
    if (existing) return existing
    const loaded = this.options.store.loadDocument(sheetId)
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
    }
    doc.on('update', (update: Uint8Array, origin: unknown) => this.onDocUpdate(entry, update, origin))
    awareness.on('update', (changes: { added: number[]; updated: number[]; removed: number[] }, origin: unknown) =>
      this.onAwarenessUpdate(entry, changes, origin),
    )
    this.entries.set(sheetId, entry)
    this.counters.documentsLoaded++
    // A long log (written by an older build, or a crash before compaction) is compacted right after the first flush.
    if (entry.seqs.length >= this.options.compactEvery) this.scheduleFlush()
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
   * whatever a later sync answer may carry is on disk too.
   */
  applyUpdate(entry: DocEntry, peer: RegistryPeer | ServerOrigin, update: Uint8Array): void {
    const store = entry.doc.store
    const pendingStructs = store.pendingStructs
    const pendingDs = store.pendingDs
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
      const claim = controlled.size === 0 && e.state !== null && !this.controlledByOther(entry, peer, e.clientId)
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

  /** A change made by the server (REST import, restore): applied, stored and relayed like a writer's, synchronously. */
  change(sheetId: string, mutate: (doc: Y.Doc) => void, userId: string | null): void {
    const entry = this.open(sheetId)
    const origin: ServerOrigin = { kind: 'server', userId }
    entry.doc.transact(() => mutate(entry.doc), origin)
    this.flush()
    if (entry.broken) throw new Error('the change could not be saved')
  }

  /** Forgets a sheet at once (deleted): queued rows and frames for it are dropped, its peers closed. */
  drop(sheetId: string, code: number, reason: string): void {
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
    const rows = this.rows
    const sends = this.sends
    this.rows = []
    this.sends = []
    if (rows.length > 0 || sends.length > 0) this.counters.flushes++
    const stored = this.commit(rows)
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
    for (const entry of stored) if (entry.seqs.length >= this.options.compactEvery) this.compact(entry)
    for (const entry of this.entries.values())
      if (entry.seqs.length >= this.options.compactEvery && !stored.has(entry)) this.compact(entry)
  }

  /** Writes the document's state and deletes the rows it covers (one transaction). */
  compact(entry: DocEntry): boolean {
    if (entry.broken || entry.seqs.length === 0 || Date.now() < entry.compactAfter) return false
    if (this.rows.some((r) => r.entry === entry)) {
      this.flush()
      if (entry.broken || entry.seqs.length === 0) return false
    }
    const state = Y.encodeStateAsUpdate(entry.doc)
    let outcome
    try {
      outcome = this.options.store.compact(entry.sheetId, state, entry.uptoSeq, entry.seqs)
    } catch (err) {
      this.options.log?.(`compaction of sheet ${entry.sheetId} failed: ${(err as Error).message}`)
      entry.compactAfter = Date.now() + this.options.idleCompactMs
      this.counters.compactionsSkipped++
      return false
    }
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
    entry.compactAfter = Date.now() + this.options.idleCompactMs
    this.counters.compactionsSkipped++
    return false
  }

  /** Periodic work: compact idle documents, evict documents without peers. */
  sweep(now = Date.now()): void {
    for (const entry of [...this.entries.values()]) {
      if (entry.seqs.length > 0 && now - entry.lastChangeAt >= this.options.idleCompactMs) this.compact(entry)
      if (entry.peers.size === 0 && entry.emptySince !== null && now - entry.emptySince >= this.options.evictAfterMs) this.evict(entry)
    }
  }

  /** Compacts (when needed) and drops a document from memory. */
  evict(entry: DocEntry): void {
    this.flush()
    if (entry.seqs.length > 0) {
      entry.compactAfter = 0
      this.compact(entry)
    }
    for (const peer of [...entry.peers.keys()]) peer.close(1001, 'the document was unloaded')
    this.destroy(entry)
    this.counters.evictions++
  }

  sheets(): DocEntry[] {
    return [...this.entries.values()]
  }

  /** Flushes, compacts every document with rows and frees them all. */
  close(): void {
    if (this.closed) return
    this.closed = true
    this.flush()
    for (const entry of [...this.entries.values()]) {
      if (entry.seqs.length > 0) {
        entry.compactAfter = 0
        this.compact(entry)
      }
      this.destroy(entry)
    }
    this.unsubscribe()
  }

  private controlledByOther(entry: DocEntry, peer: RegistryPeer, clientId: number): boolean {
    for (const [other, ids] of entry.peers) if (other !== peer && ids.has(clientId)) return true
    return false
  }

  private destroy(entry: DocEntry): void {
    if (this.entries.get(entry.sheetId) === entry) this.entries.delete(entry.sheetId)
    entry.peers.clear()
    entry.awareness.destroy()
    entry.doc.destroy()
  }

  private scheduleFlush(): void {
    if (!this.flushScheduled && !this.closed) this.flushScheduled = setImmediate(() => this.flush())
  }

  private queueRow(entry: DocEntry, update: Uint8Array, userId: string | null): void {
    this.rows.push({ entry, row: { sheetId: entry.sheetId, update, userId } })
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
  private commit(rows: QueuedRow[]): Set<DocEntry> {
    const stored = new Set<DocEntry>()
    if (rows.length === 0) return stored
    const live = rows.filter((r) => !r.entry.broken)
    let seqs: number[] | null
    try {
      seqs = this.options.store.storeUpdates(live.map((r) => r.row))
    } catch {
      seqs = null
    }
    if (seqs) {
      this.recordStored(live, seqs, stored)
      return stored
    }
    const bySheet = new Map<DocEntry, QueuedRow[]>()
    for (const r of live) bySheet.set(r.entry, [...(bySheet.get(r.entry) ?? []), r])
    for (const batch of bySheet.values()) {
      const entry = batch[0].entry
      let batchSeqs: number[]
      try {
        batchSeqs = this.options.store.storeUpdates(batch.map((r) => r.row))
      } catch (err) {
        this.counters.storeFailures++
        this.options.log?.(`could not store ${batch.length} update(s) of sheet ${entry.sheetId}: ${(err as Error).message}`)
        this.breakEntry(entry)
        continue
      }
      this.recordStored(batch, batchSeqs, stored)
    }
    return stored
  }

  private recordStored(rows: QueuedRow[], seqs: number[], stored: Set<DocEntry>): void {
    rows.forEach((r, i) => {
      r.entry.seqs.push(seqs[i])
      stored.add(r.entry)
      this.publish({ type: 'update', sheetId: r.row.sheetId, update: r.row.update, seq: seqs[i] })
    })
    this.counters.rowsStored += rows.length
  }

  /** The in-memory document holds changes the database refused: close its peers (they resync on reconnect) and unload it. */
  private breakEntry(entry: DocEntry): void {
    entry.broken = true
    for (const peer of [...entry.peers.keys()]) peer.close(1011, 'the change could not be saved; reconnecting')
    this.destroy(entry)
  }

  private onBusEvent(event: BusEvent): void {
    if (event.type === 'membership' || event.type === 'sheet-deleted' || event.type === 'sessions') {
      this.options.onControl?.(event)
      return
    }
    const entry = this.entries.get(event.sheetId)
    if (!entry || entry.broken) return
    if (event.type === 'update') {
      Y.applyUpdate(entry.doc, event.update, BUS_ORIGIN)
      if (event.seq > entry.uptoSeq && !entry.seqs.includes(event.seq)) entry.seqs.push(event.seq)
    } else {
      awarenessProtocol.applyAwarenessUpdate(entry.awareness, event.update, BUS_ORIGIN)
    }
  }
}
