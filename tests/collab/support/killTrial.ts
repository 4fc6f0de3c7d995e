/**
 * One kill -9 trial: a server in a child process relays a writer's updates to an observer, is SIGKILLed the moment
 * the observer has seen `killAfter` of them (more still in flight), and is restarted on the same port and database.
 * Then every update the observer saw must be in the database, and once the writer has reconnected nothing at all is
 * lost. Used by tests/collab/killNine.test.ts (a few trials) and bench/soak-kill.ts (twenty).
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { mkdtempSync, rmSync } from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import * as Y from 'yjs'
import { cellsOf } from '../../../shared/doc/sheetDoc'
import { loadDocument } from '../../../server/services/documents'
import { openDb } from '../../../server/db/client'
import { connectClient, createLab, until } from './fixture'

const here = path.dirname(fileURLToPath(import.meta.url))
const CHILD = path.join(here, 'childServer.ts')

export interface KillTrialResult {
  /** Writer keystrokes the observer had received when the server died. */
  relayed: number
  /** Keystrokes in the database right after the restart (≥ relayed). */
  storedAfterRestart: number
  /** Relayed keystrokes missing from the database after the restart (must be 0). */
  lostRelayed: number
  /** Keystrokes the writer made in all. */
  typed: number
  /** True when, after the writer reconnected, the database holds every keystroke. */
  convergedAfterReconnect: boolean
}

function startChild(dbFile: string, port: number, compactEvery?: number): Promise<{ child: ChildProcess; port: number }> {
  const child = spawn(process.execPath, ['--import', 'tsx', CHILD], {
    env: { ...process.env, COLLAB_DB: dbFile, COLLAB_PORT: String(port), ...(compactEvery ? { COLLAB_COMPACT_EVERY: String(compactEvery) } : {}) },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  return new Promise((resolve, reject) => {
    let out = ''
    let err = ''
    child.stdout!.on('data', (d: Buffer) => {
      out += d.toString()
      const m = /listening (\d+)/.exec(out)
      if (m) resolve({ child, port: Number(m[1]) })
    })
    child.stderr!.on('data', (d: Buffer) => (err += d.toString()))
    child.on('exit', (code) => reject(new Error(`child server exited with ${code} before listening: ${err}`)))
  })
}

function exited(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve()
  return new Promise((resolve) => child.once('exit', () => resolve()))
}

function formula(doc: Y.Doc): string {
  const cell = cellsOf(doc).length > 2 ? cellsOf(doc).get(2) : undefined
  return (cell?.get('source') as Y.Text | undefined)?.toString() ?? ''
}

/** The keystrokes ("0".."9" cycling) a formula holds after the seeded text. */
function keystrokes(text: string): number {
  return text.startsWith('Eg*2') ? text.length - 4 : -1
}

export interface KillTrialOptions {
  typed?: number
  killAfter?: number
  /** Compaction threshold of the child server (default the server's own, 500). */
  compactEvery?: number
  /** Who watches the relayed updates (default a second editor; a viewer gets the same relays). */
  observer?: 'editor2' | 'viewer'
}

export async function killTrial(options: KillTrialOptions = {}): Promise<KillTrialResult> {
  const typed = options.typed ?? 400
  const killAfter = options.killAfter ?? Math.floor(typed / 2)
  const dir = mkdtempSync(path.join(os.tmpdir(), 'penumbra-kill-'))
  const dbFile = path.join(dir, 'penumbra.db')
  const lab = await createLab(dbFile)
  const children: ChildProcess[] = []
  const clients: { destroy(): void }[] = []
  try {
    const first = await startChild(dbFile, 0, options.compactEvery)
    children.push(first.child)
    const base = { base: `ws://127.0.0.1:${first.port}/collab` }
    const writer = connectClient(base, lab.sheetId, lab.tokens.editor)
    const observer = connectClient(base, lab.sheetId, lab.tokens[options.observer ?? 'editor2'])
    clients.push(writer, observer)
    await Promise.all([writer.synced(), observer.synced()])

    let killed = false
    observer.doc.on('update', () => {
      if (!killed && keystrokes(formula(observer.doc)) >= killAfter) {
        killed = true
        first.child.kill('SIGKILL')
      }
    })
    const text = cellsOf(writer.doc).get(2).get('source') as Y.Text
    for (let i = 0; i < typed; i++) {
      text.insert(text.length, String(i % 10))
      if (i % 4 === 3) await new Promise((r) => setImmediate(r))
    }
    await until(() => killed, 'the observer to see enough updates', 20_000)
    await exited(first.child)
    // What the observer holds now arrived before the process died: all of it was relayed.
    const seen = new Y.Doc()
    Y.applyUpdate(seen, Y.encodeStateAsUpdate(observer.doc))
    observer.destroy()

    const second = await startChild(dbFile, first.port, options.compactEvery)
    children.push(second.child)
    const check = openDb(dbFile)
    let stored: Y.Doc
    try {
      stored = await loadDocument(check.db, lab.sheetId)
    } finally {
      check.close()
    }
    const storedText = formula(stored)
    const seenText = formula(seen)
    const copy = new Y.Doc()
    Y.applyUpdate(copy, Y.encodeStateAsUpdate(stored))
    const before = Buffer.from(Y.encodeStateAsUpdate(copy))
    Y.applyUpdate(copy, Y.encodeStateAsUpdate(seen))
    const nothingNew = before.equals(Buffer.from(Y.encodeStateAsUpdate(copy)))
    const lostRelayed = nothingNew && storedText.startsWith(seenText) ? 0 : Math.max(1, keystrokes(seenText) - keystrokes(storedText))

    // The writer's provider reconnects to the restarted server by itself and sends what the server lacks.
    await until(() => writer.provider.synced && writer.provider.wsconnected, 'the writer to reconnect', 20_000)
    const fresh = connectClient(base, lab.sheetId, lab.tokens.viewer)
    clients.push(fresh)
    let convergedAfterReconnect = true
    try {
      await fresh.synced()
      await until(() => formula(fresh.doc) === formula(writer.doc), 'the restarted server to hold every keystroke', 10_000)
    } catch {
      convergedAfterReconnect = false
      if (process.env.KILL_TRIAL_DEBUG)
        console.error('debug', formula(fresh.doc).length, formula(writer.doc).length, writer.provider.wsconnected, writer.provider.synced, writer.closes)
    }
    return {
      relayed: keystrokes(seenText),
      storedAfterRestart: keystrokes(storedText),
      lostRelayed,
      typed,
      convergedAfterReconnect: convergedAfterReconnect && keystrokes(formula(writer.doc)) === typed,
    }
  } finally {
    for (const c of clients) c.destroy()
    for (const child of children) if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL')
    await Promise.all(children.map(exited))
    await lab.handle.close()
    rmSync(dir, { recursive: true, force: true })
  }
}
