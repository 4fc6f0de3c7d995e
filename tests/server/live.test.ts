/**
 * The REST API and the live sheet together, through startServer() (a real HTTP server on a free port with the
 * collaboration server behind /collab/): export follows live edits, and role changes, removals and deletions made
 * over REST reach open websockets at once.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import * as Y from 'yjs'
import { startServer, type RunningServer } from '../../server/index'
import { DEMO_ACCOUNTS } from '../../server/db/seed'
import { SESSION_COOKIE } from '../../server/services/sessions'
import { CLOSE } from '../../server/collab/index'
import { cellsOf } from '../../shared/doc/sheetDoc'
import { CSRF_HEADER } from '../../shared/schema/api'
import { connectClient, until, upgradeStatus, type Client } from '../collab/support/fixture'
import { emptyPgDatabase, ON_POSTGRES } from '../utils/db'

const dataDir = mkdtempSync(path.join(tmpdir(), 'penumbra-live-'))
let server: RunningServer
const clients: Client[] = []
const sessions: Record<string, string> = {}
let labId = ''

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- reply bodies of many routes, read field by field below
async function api(method: string, url: string, who: string, body?: unknown): Promise<{ status: number; body: any; headers: Headers; text: string }> {
  const res = await fetch(`${server.url}${url}`, {
    method,
    headers: { Cookie: `${SESSION_COOKIE}=${sessions[who]}`, ...(body === undefined ? {} : { 'Content-Type': 'application/json' }), [CSRF_HEADER]: '1' },
    body: body === undefined ? undefined : JSON.stringify(body),
  })
  const text = await res.text()
  return { status: res.status, body: text && res.headers.get('content-type')?.includes('json') ? JSON.parse(text) : null, headers: res.headers, text }
}

function cellNamed(doc: Y.Doc, name: string): Y.Map<unknown> | undefined {
  return cellsOf(doc)
    .toArray()
    .find((m) => m.get('name') === name)
}

/** A fresh sheet with one parameter and one formula, made by the demo editor. */
async function newSheet(title: string): Promise<string> {
  const res = await api('POST', `/api/labs/${labId}/sheets`, 'editor', {
    format: 'penumbra.sheet', version: 1, title,
    cells: [{ kind: 'parameter', name: 'd', value: 850, unit: 'nm' }, { kind: 'formula', name: 'd2', source: 'd*2', unit: 'nm' }],
  })
  expect(res.status).toBe(201)
  return res.body.id as string
}

function live(sheetId: string, who: string): Client {
  const c = connectClient({ base: `${server.url.replace('http', 'ws')}/collab` }, sheetId, sessions[who])
  clients.push(c)
  return c
}

beforeAll(async () => {
  // under DATABASE_URL the server gets an empty PostgreSQL database of its own, which it migrates and seeds
  const database = ON_POSTGRES ? { DATABASE_URL: await emptyPgDatabase() } : {}
  server = await startServer({ DATA_DIR: dataDir, PORT: '0', HOST: '127.0.0.1', NODE_ENV: 'development', PENUMBRA_SECRET: 'live-test-secret-0123456789abcdefghijkl', ...database }, () => {})
  for (const a of DEMO_ACCOUNTS) {
    const res = await fetch(`${server.url}/api/auth/sign-in`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: a.email, password: a.password }) })
    expect(res.status).toBe(200)
    sessions[a.role] = /penumbra_session=([^;]+)/.exec(res.headers.get('set-cookie')!)![1]
  }
  labId = (await api('GET', '/api/labs', 'owner')).body.labs[0].id
}, 60_000)

afterAll(async () => {
  for (const c of clients.splice(0)) c.destroy()
  await server?.close()
  rmSync(dataDir, { recursive: true, force: true })
})

describe('GET /api/sheets/:sheetId/file after live edits', () => {
  it('exports what the editors typed over the websocket, with the title as the download name', async () => {
    const sheetId = await newSheet('Live export')
    const editor = live(sheetId, 'editor')
    await editor.synced()
    editor.doc.transact(() => {
      const d2 = cellNamed(editor.doc, 'd2')!
      ;(d2.get('source') as Y.Text).insert(3, ' + 10*nm')
      cellNamed(editor.doc, 'd')!.set('value', 900)
    })
    const added = new Y.Map<unknown>()
    added.set('id', 'c-note')
    added.set('kind', 'note')
    added.set('text', new Y.Text('typed live'))
    cellsOf(editor.doc).push([added])
    const watcher = live(sheetId, 'viewer')
    await until(() => cellsOf(watcher.doc).length === 3, 'the live edits to be relayed (so they are stored)')
    const res = await api('GET', `/api/sheets/${sheetId}/file`, 'viewer')
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toBe('application/vnd.penumbra.sheet+json; charset=utf-8')
    expect(res.headers.get('content-disposition')).toContain('filename="Live export.penumbra.json"')
    const file = JSON.parse(res.text)
    expect(file.cells.map((c: { kind: string; name?: string; value?: number; source?: string; text?: string }) => [c.kind, c.name ?? null, c.value ?? c.source ?? c.text])).toEqual([
      ['parameter', 'd', 900],
      ['formula', 'd2', 'd*2 + 10*nm'],
      ['note', null, 'typed live'],
    ])
  })
})

describe('membership changes over REST reach open websockets', () => {
  it('PATCH /api/labs/:labId/members/:userId demoting the editor makes their open connection read-only at once', async () => {
    const sheetId = await newSheet('Demotion')
    const editorId = (await api('GET', '/api/auth/me', 'editor')).body.user.id
    const editor = live(sheetId, 'editor')
    const watcher = live(sheetId, 'owner')
    await Promise.all([editor.synced(), watcher.synced()])
    try {
      expect((await api('PATCH', `/api/labs/${labId}/members/${editorId}`, 'owner', { role: 'viewer' })).status).toBe(200)
      ;(cellNamed(editor.doc, 'd2')!.get('source') as Y.Text).insert(0, '3*')
      await until(() => editor.denied.length === 1, 'the demoted editor to be told no')
      expect(editor.denied[0]).toMatch(/your role \(viewer\) may read this sheet but not change it/)
      const owner = cellNamed(watcher.doc, 'd2')!.get('source') as Y.Text
      owner.insert(owner.length, '+1*nm')
      await until(() => (cellNamed(editor.doc, 'd2')!.get('source') as Y.Text).toString().endsWith('+1*nm'), 'the owner’s edit at the demoted editor')
      const file = JSON.parse((await api('GET', `/api/sheets/${sheetId}/file`, 'owner')).text)
      expect(file.cells[1].source).toBe('d*2+1*nm')
      expect(editor.provider.wsconnected).toBe(true)
    } finally {
      expect((await api('PATCH', `/api/labs/${labId}/members/${editorId}`, 'owner', { role: 'editor' })).status).toBe(200)
    }
  })

  it('DELETE /api/labs/:labId/members/:userId disconnects the removed member at once, and their next upgrade is refused', async () => {
    const sheetId = await newSheet('Removal')
    const viewerId = (await api('GET', '/api/auth/me', 'viewer')).body.user.id
    const viewer = live(sheetId, 'viewer')
    const other = live(sheetId, 'reviewer')
    await Promise.all([viewer.synced(), other.synced()])
    expect((await api('DELETE', `/api/labs/${labId}/members/${viewerId}`, 'owner')).status).toBe(204)
    await until(() => viewer.closes.length === 1, 'the removed viewer to be disconnected')
    expect(viewer.closes[0]).toEqual({ code: CLOSE.removed, reason: 'you are no longer a member of this lab' })
    expect(other.provider.wsconnected).toBe(true)
    const again = await upgradeStatus({ base: `${server.url.replace('http', 'ws')}/collab` }, sheetId, sessions.viewer)
    expect(again.status).toBe(403)
  })

  it('DELETE /api/sheets/:sheetId closes the sheet’s connections (4404)', async () => {
    const sheetId = await newSheet('Deleted while open')
    const editor = live(sheetId, 'editor')
    await editor.synced()
    expect((await api('DELETE', `/api/sheets/${sheetId}`, 'editor')).status).toBe(204)
    await until(() => editor.closes.length === 1, 'the close of the deleted sheet')
    expect(editor.closes[0].code).toBe(CLOSE.sheetDeleted)
  })
})

describe('the /collab/ upgrade on the real server', () => {
  it('answers 401 without a session, 403 for a page from another origin, and opens for the app’s own origin', async () => {
    const base = { base: `${server.url.replace('http', 'ws')}/collab` }
    const sheetId = await newSheet('Origins')
    expect((await upgradeStatus(base, sheetId, null)).status).toBe(401)
    expect((await upgradeStatus(base, sheetId, sessions.editor, { Origin: 'https://evil.example' })).status).toBe(403)
    expect((await upgradeStatus(base, sheetId, sessions.editor, { Origin: 'null' })).status).toBe(403)
    const { rawClient } = await import('../collab/support/fixture')
    const own = await rawClient(base, sheetId, sessions.editor, { Origin: server.url })
    expect(own.isOpen()).toBe(true)
    own.ws.close()
  })
})
