/** Hand-made y-websocket frames for tests: normal ones through lib0, and deliberately odd encodings. */
import * as encoding from 'lib0/encoding'
import * as decoding from 'lib0/decoding'
import * as Y from 'yjs'

/** varUint written with extra continuation bytes: `nonMinimalVarUint(0, 3)` is 0x80 0x80 0x00 (still 0). */
export function nonMinimalVarUint(value: number, bytes: number): number[] {
  const out: number[] = []
  let v = value
  for (let i = 0; i < bytes - 1; i++) {
    out.push(0x80 | (v & 0x7f))
    v = Math.floor(v / 128)
  }
  out.push(v & 0x7f)
  return out
}

function varUint(n: number): number[] {
  const e = encoding.createEncoder()
  encoding.writeVarUint(e, n)
  return [...encoding.toUint8Array(e)]
}

/**
 * A sync frame: message type 0, a sync type and the payload's length, each optionally as a non-minimal varint of
 * that many bytes, then the payload.
 */
export function syncFrame(syncType: 0 | 1 | 2, payload: Uint8Array, opts: { typeBytes?: number; syncTypeBytes?: number; lengthBytes?: number } = {}): Uint8Array {
  const head = [
    ...(opts.typeBytes ? nonMinimalVarUint(0, opts.typeBytes) : [0]),
    ...(opts.syncTypeBytes ? nonMinimalVarUint(syncType, opts.syncTypeBytes) : [syncType]),
    ...(opts.lengthBytes ? nonMinimalVarUint(payload.length, opts.lengthBytes) : varUint(payload.length)),
  ]
  const out = new Uint8Array(head.length + payload.length)
  out.set(head)
  out.set(payload, head.length)
  return out
}

export function syncStep1Frame(doc: Y.Doc = new Y.Doc()): Uint8Array {
  return syncFrame(0, Y.encodeStateVector(doc))
}

export function awarenessFrame(entries: { clientId: number; clock: number; state: unknown }[]): Uint8Array {
  const inner = encoding.createEncoder()
  encoding.writeVarUint(inner, entries.length)
  for (const e of entries) {
    encoding.writeVarUint(inner, e.clientId)
    encoding.writeVarUint(inner, e.clock)
    encoding.writeVarString(inner, JSON.stringify(e.state))
  }
  const outer = encoding.createEncoder()
  encoding.writeVarUint(outer, 1)
  encoding.writeVarUint8Array(outer, encoding.toUint8Array(inner))
  return encoding.toUint8Array(outer)
}

export const QUERY_AWARENESS_FRAME = new Uint8Array([3])

/** An update that appends `text` to the formula of the seeded sheet's cell `x` (its Y.Text), made by a fresh client. */
export function appendToFormula(base: Y.Doc, text: string, clientID?: number): Uint8Array {
  const doc = new Y.Doc()
  if (clientID !== undefined) doc.clientID = clientID
  Y.applyUpdate(doc, Y.encodeStateAsUpdate(base))
  const before = Y.encodeStateVector(doc)
  const cell = doc
    .getArray<Y.Map<unknown>>('cells')
    .toArray()
    .find((m) => m.get('name') === 'x')
  const source = cell!.get('source') as Y.Text
  source.insert(source.length, text)
  return Y.encodeStateAsUpdate(doc, before)
}

export type Received =
  | { type: 'sync-step1' | 'sync-step2' | 'update'; payload: Uint8Array }
  | { type: 'awareness'; clients: { clientId: number; clock: number; state: unknown }[] }
  | { type: 'denied'; reason: string }
  | { type: 'other'; messageType: number }

/** Decodes a server frame for assertions. */
export function readServerFrame(frame: Uint8Array): Received {
  const d = decoding.createDecoder(frame)
  const type = decoding.readVarUint(d)
  if (type === 0) {
    const sub = decoding.readVarUint(d)
    const payload = decoding.readVarUint8Array(d)
    return { type: sub === 0 ? 'sync-step1' : sub === 1 ? 'sync-step2' : 'update', payload }
  }
  if (type === 1) {
    const inner = decoding.createDecoder(decoding.readVarUint8Array(d))
    const n = decoding.readVarUint(inner)
    const clients = []
    for (let i = 0; i < n; i++)
      clients.push({ clientId: decoding.readVarUint(inner), clock: decoding.readVarUint(inner), state: JSON.parse(decoding.readVarString(inner)) })
    return { type: 'awareness', clients }
  }
  if (type === 2) {
    decoding.readVarUint(d)
    return { type: 'denied', reason: decoding.readVarString(d) }
  }
  return { type: 'other', messageType: type }
}
