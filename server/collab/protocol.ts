/**
 * The y-websocket wire protocol, read and written with lib0 and y-protocols only — never by looking at raw bytes, so a
 * message type written as a non-minimal varint (`0x80 0x00` for 0) is understood as the number it decodes to.
 *
 * Frame = varUint messageType, then per type:
 *   0 sync       varUint syncType (0 step 1: varUint8Array state vector; 1 step 2 / 2 update: varUint8Array update)
 *   1 awareness  varUint8Array awareness update (varUint n, then n × varUint clientId, varUint clock, varString JSON)
 *   2 auth       varUint authType (0 permission denied: varString reason) — server to client only
 *   3 query awareness (no body)
 */
import * as decoding from 'lib0/decoding'
import * as encoding from 'lib0/encoding'
import * as Y from 'yjs'
import * as syncProtocol from 'y-protocols/sync'
import * as authProtocol from 'y-protocols/auth'
import * as awarenessProtocol from 'y-protocols/awareness'
import { checkShape } from './shape'

export const MESSAGE_SYNC = 0
export const MESSAGE_AWARENESS = 1
export const MESSAGE_AUTH = 2
export const MESSAGE_QUERY_AWARENESS = 3

export interface AwarenessEntry {
  clientId: number
  clock: number
  /** The parsed state; null means the client left. */
  state: Record<string, unknown> | null
}

export type ClientMessage =
  | { type: 'sync-step1'; stateVector: Uint8Array }
  | { type: 'sync-step2'; update: Uint8Array }
  | { type: 'update'; update: Uint8Array }
  | { type: 'awareness'; entries: AwarenessEntry[] }
  | { type: 'query-awareness' }
  | { type: 'auth' }

export type Decoded = { ok: true; message: ClientMessage } | { ok: false; reason: string }

/** Largest awareness state we keep for one client (JSON characters): presence is a name, a colour and a cursor. */
export const MAX_AWARENESS_STATE_CHARS = 16 * 1024
/**
 * Deepest nesting of objects and arrays an awareness state may have (a cursor is about 4 deep). JSON.parse takes far
 * deeper values than JSON.stringify can write back, so a few kilobytes of brackets would otherwise overflow the stack
 * when the state is re-encoded for relay.
 */
export const MAX_AWARENESS_STATE_DEPTH = 32

/** Nesting depth of a parsed JSON value (0 for a scalar), counted without recursion and stopping past `limit`. */
function jsonDepth(value: unknown, limit: number): number {
  let deepest = 0
  const stack: [unknown, number][] = [[value, 0]]
  while (stack.length > 0) {
    const [v, d] = stack.pop()!
    if (v === null || typeof v !== 'object') continue
    const here = d + 1
    if (here > deepest) deepest = here
    if (deepest > limit) return deepest
    for (const child of Array.isArray(v) ? v : Object.values(v)) stack.push([child, here])
  }
  return deepest
}

/**
 * Most awareness entries one message may carry. The stock client sends back every presence it learns, so a newcomer
 * echoes everyone on the sheet in one message: this must stay far above the people one sheet can hold (it once was
 * 64, and the 65th person to open a busy sheet was disconnected over and over).
 */
export const MAX_AWARENESS_ENTRIES = 4096

class FrameError extends Error {}

/** A length-prefixed byte array, refusing a length that runs past the end of the frame. */
function readBytes(decoder: decoding.Decoder): Uint8Array {
  const len = decoding.readVarUint(decoder)
  const left = decoder.arr.length - decoder.pos
  if (len > left) throw new FrameError(`declares ${len} bytes but only ${left} follow`)
  // A copy with its own buffer: lib0 views reach past a slice's end into the socket's pooled memory.
  const out = new Uint8Array(decoder.arr.subarray(decoder.pos, decoder.pos + len))
  decoder.pos += len
  return out
}

function readString(decoder: decoding.Decoder): string {
  const bytes = readBytes(decoder)
  return new TextDecoder('utf-8', { fatal: true }).decode(bytes)
}

function expectEnd(decoder: decoding.Decoder) {
  if (decoder.pos !== decoder.arr.length) throw new FrameError(`${decoder.arr.length - decoder.pos} unexpected trailing bytes`)
}

/** Decodes an awareness update into its entries (the JSON of each state is parsed and size-checked). */
export function decodeAwarenessUpdate(update: Uint8Array): AwarenessEntry[] {
  const decoder = decoding.createDecoder(update)
  const n = decoding.readVarUint(decoder)
  if (n > MAX_AWARENESS_ENTRIES) throw new FrameError(`awareness update lists ${n} clients (at most ${MAX_AWARENESS_ENTRIES})`)
  const entries: AwarenessEntry[] = []
  for (let i = 0; i < n; i++) {
    const clientId = decoding.readVarUint(decoder)
    const clock = decoding.readVarUint(decoder)
    if (clientId > 0xffffffff) throw new FrameError('awareness client id out of range')
    const json = readString(decoder)
    if (json.length > MAX_AWARENESS_STATE_CHARS) throw new FrameError(`awareness state of ${json.length} characters (at most ${MAX_AWARENESS_STATE_CHARS})`)
    let state: unknown
    try {
      state = JSON.parse(json)
    } catch {
      throw new FrameError('awareness state is not JSON')
    }
    if (state !== null && (typeof state !== 'object' || Array.isArray(state))) throw new FrameError('awareness state must be an object or null')
    if (jsonDepth(state, MAX_AWARENESS_STATE_DEPTH) > MAX_AWARENESS_STATE_DEPTH)
      throw new FrameError(`awareness state nested more than ${MAX_AWARENESS_STATE_DEPTH} levels deep`)
    entries.push({ clientId, clock, state: state as Record<string, unknown> | null })
  }
  expectEnd(decoder)
  return entries
}

/** A presence colour: `#rgb`, `#rrggbb`, or either with an alpha digit pair (`#rrggbbaa`, the light caret tint). */
const HEX_COLOUR = /^#(?:[0-9a-fA-F]{3}|[0-9a-fA-F]{6}|[0-9a-fA-F]{8})$/
/** A short plain name: no control characters and nothing that could open markup. */
const PLAIN_NAME = /^[^\u0000-\u001f\u007f<>]{1,80}$/
/** A cell id as the sheet document holds them. */
const CELL_ID = /^[\w-]{1,64}$/

/**
 * Checks one client's own presence before it is relayed (other clients put these fields in style attributes and
 * labels): `user.color` and `user.colorLight` hex colours, `user.name` a short plain string, `cell` null or a cell id.
 * Returns the problem, or null. A state of null (the client left) is always fine.
 */
export function presenceProblem(state: Record<string, unknown> | null): string | null {
  if (state === null) return null
  const user = state.user
  if (user !== undefined) {
    if (user === null || typeof user !== 'object' || Array.isArray(user)) return 'presence user must be an object'
    const u = user as Record<string, unknown>
    for (const key of ['color', 'colorLight'])
      if (u[key] !== undefined && (typeof u[key] !== 'string' || !HEX_COLOUR.test(u[key]))) return `presence ${key} must be a hex colour like #1f6feb`
    if (u.name !== undefined && (typeof u.name !== 'string' || !PLAIN_NAME.test(u.name))) return 'presence name must be plain text of at most 80 characters'
  }
  const cell = state.cell
  if (cell !== undefined && cell !== null && (typeof cell !== 'string' || !CELL_ID.test(cell))) return 'presence cell must be a cell id or null'
  return null
}

/** Re-encodes awareness entries in the y-protocols format. */
export function encodeAwarenessEntries(entries: readonly AwarenessEntry[]): Uint8Array {
  const encoder = encoding.createEncoder()
  encoding.writeVarUint(encoder, entries.length)
  for (const e of entries) {
    encoding.writeVarUint(encoder, e.clientId)
    encoding.writeVarUint(encoder, e.clock)
    encoding.writeVarString(encoder, JSON.stringify(e.state))
  }
  return encoding.toUint8Array(encoder)
}

/**
 * Decodes one client frame. Structure only: a sync step 1's state vector is checked here, a Yjs update's content is
 * checked by whoever means to apply it (`checkUpdate`), so a reader's dropped update costs no parse.
 */
export function decodeClientMessage(frame: Uint8Array): Decoded {
  try {
    const decoder = decoding.createDecoder(frame)
    const messageType = decoding.readVarUint(decoder)
    let message: ClientMessage
    switch (messageType) {
      case MESSAGE_SYNC: {
        const syncType = decoding.readVarUint(decoder)
        const payload = readBytes(decoder)
        if (syncType === syncProtocol.messageYjsSyncStep1) {
          try {
            Y.decodeStateVector(payload)
          } catch {
            throw new FrameError('sync step 1 carries a malformed state vector')
          }
          message = { type: 'sync-step1', stateVector: payload }
        } else if (syncType === syncProtocol.messageYjsSyncStep2) message = { type: 'sync-step2', update: payload }
        else if (syncType === syncProtocol.messageYjsUpdate) message = { type: 'update', update: payload }
        else throw new FrameError(`unknown sync message type ${syncType}`)
        break
      }
      case MESSAGE_AWARENESS:
        message = { type: 'awareness', entries: decodeAwarenessUpdate(readBytes(decoder)) }
        break
      case MESSAGE_QUERY_AWARENESS:
        message = { type: 'query-awareness' }
        break
      case MESSAGE_AUTH: {
        const authType = decoding.readVarUint(decoder)
        if (authType === authProtocol.messagePermissionDenied) readString(decoder)
        else throw new FrameError(`unknown auth message type ${authType}`)
        message = { type: 'auth' }
        break
      }
      default:
        throw new FrameError(`unknown message type ${messageType}`)
    }
    expectEnd(decoder)
    return { ok: true, message }
  } catch (err) {
    if (err instanceof FrameError) return { ok: false, reason: err.message }
    return { ok: false, reason: `truncated or malformed frame (${(err as Error).message})` }
  }
}

/**
 * Deepest nesting of plain values (objects, arrays) inside one document update's content. A sheet's deepest value is a
 * spectrum's columns, about 4 levels. Yjs reads JSON content far deeper than it can write it back, so an update
 * nested a few thousand levels deep would be applied and then fail every later encode of the document (sync
 * answers, relay, compaction) with a stack overflow.
 */
export const MAX_UPDATE_VALUE_DEPTH = 64

/** The plain values an item's content carries (none for text, types, binary and deletions). */
function contentValues(content: unknown): unknown[] {
  if (content instanceof Y.ContentAny || content instanceof Y.ContentJSON) return content.arr
  if (content instanceof Y.ContentEmbed) return [content.embed]
  if (content instanceof Y.ContentFormat) return [content.value]
  if (content instanceof Y.ContentDoc) return [content.opts]
  return []
}

export type UpdateCheck = { ok: true } | { ok: false; malformed: boolean; reason: string }

/**
 * Parses a Yjs (v1) update completely without applying it, so a malformed one is refused before it touches a
 * document; also refuses content nested deeper than MAX_UPDATE_VALUE_DEPTH, and, given the live document, an update
 * that would break the sheet document's shape (shape.ts).
 */
export function checkUpdate(update: Uint8Array, doc?: Y.Doc): UpdateCheck {
  const problem = parseUpdate(update)
  if (typeof problem === 'string') return { ok: false, malformed: true, reason: problem }
  if (!doc) return { ok: true }
  const shape = checkShape(doc, problem)
  return shape === null ? { ok: true } : { ok: false, malformed: false, reason: `edit refused: ${shape}` }
}

function parseUpdate(update: Uint8Array): string | ReturnType<typeof Y.decodeUpdate> {
  let decoded: ReturnType<typeof Y.decodeUpdate>
  try {
    decoded = Y.decodeUpdate(update)
  } catch (err) {
    return `malformed document update (${(err as Error).message})`
  }
  for (const struct of decoded.structs) {
    if (!(struct instanceof Y.Item)) continue
    for (const value of contentValues(struct.content))
      if (jsonDepth(value, MAX_UPDATE_VALUE_DEPTH) > MAX_UPDATE_VALUE_DEPTH)
        return `document update holds a value nested more than ${MAX_UPDATE_VALUE_DEPTH} levels deep`
  }
  return decoded
}

export function encodeSyncStep1(doc: Y.Doc): Uint8Array {
  const encoder = encoding.createEncoder()
  encoding.writeVarUint(encoder, MESSAGE_SYNC)
  syncProtocol.writeSyncStep1(encoder, doc)
  return encoding.toUint8Array(encoder)
}

export function encodeSyncStep2(doc: Y.Doc, stateVector?: Uint8Array): Uint8Array {
  const encoder = encoding.createEncoder()
  encoding.writeVarUint(encoder, MESSAGE_SYNC)
  syncProtocol.writeSyncStep2(encoder, doc, stateVector)
  return encoding.toUint8Array(encoder)
}

/**
 * A relayed update, as a Buffer over the encoded bytes: one frame goes to every peer of the sheet, and `ws` sends a
 * Buffer as it is (a plain Uint8Array would be wrapped once per peer).
 */
export function encodeUpdateMessage(update: Uint8Array): Buffer {
  const encoder = encoding.createEncoder()
  encoding.writeVarUint(encoder, MESSAGE_SYNC)
  syncProtocol.writeUpdate(encoder, update)
  const bytes = encoding.toUint8Array(encoder)
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)
}

export function encodeAwarenessMessage(awareness: awarenessProtocol.Awareness, clients: number[]): Uint8Array {
  const encoder = encoding.createEncoder()
  encoding.writeVarUint(encoder, MESSAGE_AWARENESS)
  encoding.writeVarUint8Array(encoder, awarenessProtocol.encodeAwarenessUpdate(awareness, clients))
  return encoding.toUint8Array(encoder)
}

export function encodePermissionDenied(reason: string): Uint8Array {
  const encoder = encoding.createEncoder()
  encoding.writeVarUint(encoder, MESSAGE_AUTH)
  authProtocol.writePermissionDenied(encoder, reason)
  return encoding.toUint8Array(encoder)
}
