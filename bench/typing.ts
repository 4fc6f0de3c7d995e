/**
 * The typing schedule and latency measurement shared by the collaboration benchmarks (collab-latency, scale): N
 * editors, each typing markers `k<editor>-<n>;` into its own formula cell at a fixed interval, over raw websockets
 * speaking the y-websocket protocol; latency is measured per (update, receiving editor) pair from the send to the
 * arrival of the frame that carries it.
 */
import WebSocket from 'ws'
import * as Y from 'yjs'
import * as encoding from 'lib0/encoding'
import { SESSION_COOKIE } from '../server/services/sessions'
import { cellsOf } from '../shared/doc/sheetDoc'
import type { SheetFile } from '../shared/schema/sheet'

/** A sheet of `editors` formula cells, one per editor. */
export function typingSheet(editors: number, title = 'Fifty-hand edge model'): SheetFile {
  return {
    format: 'penumbra.sheet',
    version: 1,
    title,
    cells: Array.from({ length: editors }, (_, i) => ({ id: `f${i}`, kind: 'formula' as const, name: `x${i}`, source: `${i}*eV`, unit: 'eV' })),
  }
}

/** A small deterministic generator (mulberry32), so every round types on the same schedule. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

export function percentile(sorted: Float64Array, p: number): number {
  if (sorted.length === 0) return NaN
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))]
}

function updateFrame(update: Uint8Array): Uint8Array {
  const e = encoding.createEncoder()
  encoding.writeVarUint(e, 0)
  encoding.writeVarUint(e, 2)
  encoding.writeVarUint8Array(e, update)
  return encoding.toUint8Array(e)
}

interface Editor {
  ws: WebSocket
  doc: Y.Doc
  text: Y.Text
}

function openEditors(portOf: (editor: number) => number, sheetId: string, tokens: string[], seed: Uint8Array, onFrame: (who: number, data: Buffer) => void): Promise<Editor[]> {
  return Promise.all(
    tokens.map(
      (token, i) =>
        new Promise<Editor>((resolve, reject) => {
          const ws = new WebSocket(`ws://127.0.0.1:${portOf(i)}/collab/${sheetId}`, { headers: { Cookie: `${SESSION_COOKIE}=${token}` } })
          const doc = new Y.Doc()
          Y.applyUpdate(doc, seed)
          const text = cellsOf(doc).get(i).get('source') as Y.Text
          ws.on('message', (data: Buffer) => onFrame(i, data))
          ws.once('open', () => resolve({ ws, doc, text }))
          ws.once('error', reject)
        }),
    ),
  )
}

const MARKER = /k(\d+)-(\d+);/g

export interface TypingOptions {
  /** The port editor i connects to (one server, or several instances). */
  portOf: (editor: number) => number
  sheetId: string
  /** One session token per editor; editor i types into cell i. */
  tokens: string[]
  /** The document state the server holds, so the editors' updates apply on top of it. */
  seed: Uint8Array
  /** Each editor's start offset within the first interval (ms). */
  offsets: readonly number[]
  updatesPerEditor: number
  intervalMs: number
  /** The first updates of each editor are sent but not measured. */
  warmupUpdates: number
}

export interface TypingRound {
  latencies: number[]
  /** Deliveries that never arrived within 15 s of the last send. */
  missing: number
}

/** One round of typing: opens the editors, types on the schedule, waits for every delivery, closes the sockets. */
export async function typeRound(o: TypingOptions): Promise<TypingRound> {
  const editorsCount = o.tokens.length
  const sent = new Map<string, number>()
  const latencies: number[] = []
  let received = 0
  const onFrame = (who: number, data: Buffer) => {
    if (data[0] !== 0 || data[1] !== 2) return
    const now = performance.now()
    const text = data.toString('latin1')
    for (const m of text.matchAll(MARKER)) {
      if (Number(m[1]) === who) continue
      const t0 = sent.get(`${m[1]}-${m[2]}`)
      if (t0 === undefined) continue
      received++
      if (Number(m[2]) >= o.warmupUpdates) latencies.push(now - t0)
    }
  }
  const editors = await openEditors(o.portOf, o.sheetId, o.tokens, o.seed, onFrame)
  await new Promise((r) => setTimeout(r, 300))
  await Promise.all(
    editors.map(
      (editor, i) =>
        new Promise<void>((resolve) => {
          let seq = 0
          editor.doc.on('update', (update: Uint8Array) => editor.ws.send(updateFrame(update)))
          const tick = () => {
            const marker = `k${i}-${seq};`
            sent.set(`${i}-${seq}`, performance.now())
            editor.text.insert(editor.text.length, marker)
            seq++
            if (seq < o.updatesPerEditor) setTimeout(tick, o.intervalMs)
            else resolve()
          }
          setTimeout(tick, o.offsets[i])
        }),
    ),
  )
  const expected = editorsCount * o.updatesPerEditor * (editorsCount - 1)
  const deadline = Date.now() + 15_000
  while (received < expected && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20))
  for (const e of editors) e.ws.terminate()
  return { latencies, missing: expected - received }
}
