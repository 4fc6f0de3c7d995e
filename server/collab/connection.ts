/**
 * One websocket of one person on one sheet: rate limit, decoding, and the role rules. Readers (reviewer, viewer) may
 * ask for the document (sync step 1), publish their own presence and query presence; their document updates are
 * dropped unread, counted, and answered once with permission-denied, and they stay connected.
 */
import type { Duplex } from 'node:stream'
import type { RawData, WebSocket } from 'ws'
import type { Role } from '../db/schema'
import { canWrite } from '../services/access'
import type { Admission } from './auth'
import type { DocEntry, DocumentRegistry, RegistryPeer } from './registry'
import { holdUntilTurnEnds, wireFrame } from './turnWrites'
import { checkUpdate, decodeClientMessage, encodePermissionDenied, presenceProblem, type AwarenessEntry } from './protocol'

/** Close codes. 44xx tell the y-websocket client not to reconnect (the server decided); the others are transient. */
export const CLOSE = {
  goingAway: 1001,
  unsupportedData: 1003,
  malformed: 1007,
  rateLimited: 1008,
  tooBig: 1009,
  saveFailed: 1011,
  tooSlow: 1013,
  sessionEnded: 4401,
  removed: 4403,
  sheetDeleted: 4404,
} as const

export interface RateLimit {
  /** Messages per second, sustained. */
  messagesPerSecond: number
  /** Messages allowed in a burst. */
  messageBurst: number
  /** Bytes per second, sustained. */
  bytesPerSecond: number
  /** Bytes allowed in a burst. */
  byteBurst: number
}

export const DEFAULT_RATE_LIMIT: RateLimit = {
  messagesPerSecond: 200,
  messageBurst: 600,
  bytesPerSecond: 4 * 1024 * 1024,
  byteBurst: 8 * 1024 * 1024,
}

/**
 * A connection whose unsent backlog stays above MAX_BUFFERED_BYTES for STALLED_MS is not reading: it is closed rather
 * than buffered for ever. (A large first sync may sit above the mark briefly on a slow link; that is not a stall.)
 */
export const MAX_BUFFERED_BYTES = 32 * 1024 * 1024
export const STALLED_MS = 30_000

/**
 * Sync step 1 answers encode the whole document, so they are rationed apart from other messages: a burst of 10, then
 * one every 3 s (the stock client sends one per connection, or one per resync interval when that is set).
 */
export const SYNC_REQUEST_BURST = 10
export const SYNC_REQUEST_EVERY_MS = 3000

export interface ConnectionCounters {
  deniedUpdates: number
  malformedFrames: number
  oversizeFrames: number
  textFrames: number
  rateLimited: number
  awarenessRefused: number
  /** Well-formed document updates refused because they would break the sheet document's shape (shape.ts). */
  refusedUpdates: number
  /** Messages whose handling threw (a server bug, never a client's fault alone); their connections were closed. */
  unexpectedFailures: number
}

export function emptyConnectionCounters(): ConnectionCounters {
  return { deniedUpdates: 0, malformedFrames: 0, oversizeFrames: 0, textFrames: 0, rateLimited: 0, awarenessRefused: 0, refusedUpdates: 0, unexpectedFailures: 0 }
}

const WS_OPEN = 1

/** Close reasons are at most 123 bytes of UTF-8. */
function reasonText(reason: string): string {
  let out = reason
  while (Buffer.byteLength(out) > 123) out = out.slice(0, -2) + '…'
  return out
}

function toBytes(data: RawData): Uint8Array {
  if (Array.isArray(data)) return new Uint8Array(Buffer.concat(data))
  if (data instanceof ArrayBuffer) return new Uint8Array(data)
  return data
}

export class CollabConnection implements RegistryPeer {
  readonly userId: string
  readonly userName: string
  readonly sheetId: string
  readonly labId: string
  readonly token: string
  readonly expiresAt: number
  role: Role
  /** Document updates this connection sent without the right to edit. */
  denied = 0
  closed = false
  alive = true
  lastRecheck = Date.now()
  /** Settles when the socket has closed. */
  readonly whenClosed: Promise<void>
  private deniedAnswered = false
  private messageTokens: number
  private byteTokens: number
  private lastRefill = Date.now()
  private syncTokens = SYNC_REQUEST_BURST
  private lastSyncRefill = Date.now()
  private backlogSince = 0

  constructor(
    private readonly ws: WebSocket,
    admission: Admission,
    private readonly entry: DocEntry,
    private readonly registry: DocumentRegistry,
    private readonly counters: ConnectionCounters,
    private readonly limit: RateLimit,
    private readonly onClosed: (conn: CollabConnection) => void,
    private readonly log?: (message: string) => void,
    /** The upgraded socket under `ws`, corked while a turn's frames gather (absent: every frame is written at once). */
    private readonly socket?: Duplex,
  ) {
    this.userId = admission.user.id
    this.userName = admission.user.name
    this.sheetId = admission.sheetId
    this.labId = admission.labId
    this.token = admission.token
    this.expiresAt = admission.user.exp * 1000
    this.role = admission.role
    this.messageTokens = limit.messageBurst
    this.byteTokens = limit.byteBurst
    ws.on('message', (data, isBinary) => {
      try {
        this.onMessage(data, isBinary)
      } catch (err) {
        // Nothing a client sends may end the process (a throw here would be uncaught): this connection alone goes.
        this.counters.unexpectedFailures++
        this.log?.(`a message from ${this.userId} on sheet ${this.sheetId} could not be handled: ${(err as Error).message}`)
        this.close(CLOSE.saveFailed, 'the server could not handle this message; reconnecting')
      }
    })
    ws.on('pong', () => {
      this.alive = true
    })
    ws.on('error', (err: Error & { code?: string }) => {
      // ws has already sent its close frame (1009 for an oversize frame, 1002/1007 for a broken one).
      if (err.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH') this.counters.oversizeFrames++
      else this.counters.malformedFrames++
      this.detach()
    })
    this.whenClosed = new Promise((resolve) => ws.once('close', () => resolve()))
    ws.on('close', () => this.detach())
    registry.join(entry, this, this.canWrite)
  }

  get canWrite(): boolean {
    return canWrite(this.role)
  }

  send(frame: Uint8Array): void {
    if (this.closed || this.ws.readyState !== WS_OPEN) return
    if (this.ws.bufferedAmount > MAX_BUFFERED_BYTES) {
      const now = Date.now()
      if (this.backlogSince === 0) this.backlogSince = now
      else if (now - this.backlogSince > STALLED_MS) {
        this.close(CLOSE.tooSlow, 'too far behind; reconnect to catch up')
        return
      }
    } else this.backlogSince = 0
    // One write per socket per turn of the event loop, however many edits were relayed in it (turnWrites.ts), of a
    // frame built once for all receivers. Writing it to the socket under ws is safe: compression is off (index.ts), so
    // ws never queues a frame of its own, and its control frames (ping, close) go down the same socket in call order.
    if (this.socket) {
      holdUntilTurnEnds(this.socket)
      this.socket.write(wireFrame(frame))
    } else this.ws.send(frame)
  }

  /** Closes with a code and reason; the connection stops receiving document traffic at once. */
  close(code: number, reason: string): void {
    if (this.closed) return
    this.detach()
    try {
      this.ws.close(code, reasonText(reason))
    } catch {
      this.ws.terminate()
    }
  }

  /** Drops the socket without a closing handshake (shutdown of a peer that did not answer). */
  terminate(): void {
    this.detach()
    this.ws.terminate()
  }

  /** A role change from the lab: removed → disconnected, demoted → read-only now, promoted → asked for its state. */
  applyRole(role: Role | null): void {
    if (this.closed) return
    if (role === null) {
      this.close(CLOSE.removed, 'you are no longer a member of this lab')
      return
    }
    const couldWrite = this.canWrite
    this.role = role
    if (!couldWrite && this.canWrite) this.registry.requestState(this.entry, this)
  }

  /** Liveness: a connection that did not answer the last ping is dropped. */
  ping(): void {
    if (this.closed) return
    if (!this.alive) {
      this.detach()
      this.ws.terminate()
      return
    }
    this.alive = false
    try {
      this.ws.ping()
    } catch {
      this.detach()
    }
  }

  private detach(): void {
    if (this.closed) return
    this.closed = true
    try {
      this.registry.leave(this.entry, this)
    } catch (err) {
      // Called from socket events too, where a throw would be uncaught: the departure is logged, never fatal.
      this.counters.unexpectedFailures++
      this.log?.(`the departure of ${this.userId} from sheet ${this.sheetId} failed: ${(err as Error).message}`)
    }
    this.onClosed(this)
  }

  private takeTokens(bytes: number): boolean {
    const now = Date.now()
    const elapsed = (now - this.lastRefill) / 1000
    this.lastRefill = now
    this.messageTokens = Math.min(this.limit.messageBurst, this.messageTokens + elapsed * this.limit.messagesPerSecond)
    this.byteTokens = Math.min(this.limit.byteBurst, this.byteTokens + elapsed * this.limit.bytesPerSecond)
    if (this.messageTokens < 1 || this.byteTokens < bytes) return false
    this.messageTokens -= 1
    this.byteTokens -= bytes
    return true
  }

  private onMessage(data: RawData, isBinary: boolean): void {
    if (this.closed || !this.entry.peers.has(this)) return
    if (!isBinary) {
      this.counters.textFrames++
      this.close(CLOSE.unsupportedData, 'text frames are not part of the protocol; send binary y-websocket messages')
      return
    }
    const frame = toBytes(data)
    if (!this.takeTokens(frame.byteLength)) {
      this.counters.rateLimited++
      this.close(CLOSE.rateLimited, 'too many messages; slow down')
      return
    }
    const decoded = decodeClientMessage(frame)
    if (!decoded.ok) {
      this.counters.malformedFrames++
      this.close(CLOSE.malformed, `malformed message: ${decoded.reason}`)
      return
    }
    const message = decoded.message
    switch (message.type) {
      case 'sync-step1': {
        const now = Date.now()
        this.syncTokens = Math.min(SYNC_REQUEST_BURST, this.syncTokens + (now - this.lastSyncRefill) / SYNC_REQUEST_EVERY_MS)
        this.lastSyncRefill = now
        if (this.syncTokens < 1) {
          this.counters.rateLimited++
          this.close(CLOSE.rateLimited, 'too many sync requests; slow down')
          return
        }
        this.syncTokens -= 1
        this.registry.answerSyncStep1(this.entry, this, message.stateVector)
        return
      }
      case 'sync-step2':
      case 'update': {
        if (!this.canWrite) {
          this.deny()
          return
        }
        const check = checkUpdate(message.update, this.entry.doc)
        if (!check.ok) {
          if (check.malformed) this.counters.malformedFrames++
          else this.counters.refusedUpdates++
          this.close(CLOSE.malformed, check.reason)
          return
        }
        try {
          this.registry.applyUpdate(this.entry, this, message.update, message.type === 'update')
        } catch (err) {
          this.counters.malformedFrames++
          this.close(CLOSE.malformed, `update refused: ${(err as Error).message}`)
          return
        }
        // Commit and relay now rather than on the next turn of the event loop: with WAL and synchronous=NORMAL a
        // commit costs tens of microseconds, and waiting for a batch only adds the queue's delay to every edit. The
        // frames leave each socket at the end of this turn, together with any others relayed in it (send()).
        this.registry.flush()
        return
      }
      case 'awareness': {
        // presence that other clients would put into style attributes and labels is checked first; a bad entry is
        // dropped and counted, the rest go on
        const valid = message.entries.filter((e) => presenceProblem(e.state) === null)
        const refused = this.registry.applyAwareness(this.entry, this, valid.map((e) => this.stamp(e)))
        this.counters.awarenessRefused += refused + message.entries.length - valid.length
        return
      }
      case 'query-awareness':
        this.registry.sendAwarenessStates(this.entry, this)
        return
      case 'auth':
        // Permission messages flow from server to client; one sent the other way means nothing.
        return
    }
  }

  private deny(): void {
    this.denied++
    this.counters.deniedUpdates++
    if (this.deniedAnswered) return
    this.deniedAnswered = true
    this.registry.queueSend(this.entry, this, encodePermissionDenied(`your role (${this.role}) may read this sheet but not change it`))
  }

  /** Presence carries the signed-in name and id, whatever the client claimed. */
  private stamp(entry: AwarenessEntry): AwarenessEntry {
    if (entry.state === null) return entry
    const claimed = entry.state.user
    const user = claimed && typeof claimed === 'object' && !Array.isArray(claimed) ? (claimed as Record<string, unknown>) : {}
    return { ...entry, state: { ...entry.state, user: { ...user, id: this.userId, name: this.userName } } }
  }
}
