/**
 * Snapshots: freeze a sheet (its Yjs state, its canonical sheet file with datasets inlined, the results the server's
 * engine computed from that file, the engine version and the file's SHA-256), list them, read them, export them,
 * restore them into a new sheet, and delete them (owners, when nothing uses them). Nothing here updates a snapshot.
 */
import { createHash } from 'node:crypto'
import { and, count, desc, eq, gt, isNull, sql } from 'drizzle-orm'
import * as Y from 'yjs'
import type { AppDeps } from '../deps'
import type { AppConfig } from '../config'
import { isPostgres, type Db } from '../db/client'
import { guestLinks, reviews, snapshots, users } from '../db/tables'
import { cellsOf, docToSheetFile, newCellId } from '../../shared/doc/sheetDoc'
import { canonicalJson, SNAPSHOT_MEMBER } from '../../shared/snapshot/canonical'
import { parseSheetFile, withCellIds, type SheetFile } from '../../shared/schema/sheet'
import { shortHash, type SnapshotDetail, type SnapshotSummary } from '../../shared/schema/api'
import { conflict, HttpError } from '../errors'
import type { SheetRow } from '../types'
import { loadDocument } from './documents'
import { inlineDatasets } from './datasets'
import { sharedEvaluator, type Evaluator } from './evaluation'
import { ENGINE_VERSION, evaluateSheet } from '../../shared/engine/index'
import { parseSheetFileText } from '../../shared/schema/sheet'
import { reviewStateOf } from './reviews'
import { createSheet } from './sheets'
import { newId } from './tokens'

export type SnapshotRow = typeof snapshots.$inferSelect

export function sha256Hex(text: string): string {
  return createHash('sha256').update(text, 'utf8').digest('hex')
}

/**
 * The sheet file a document holds now, titled as the sheet is, with its stored datasets' numbers written into the
 * spectrum cells (services/datasets.ts), so a snapshot's file stands alone.
 */
export async function liveSheetFile(db: Db, sheet: Pick<SheetRow, 'id' | 'labId' | 'title'>, doc?: Y.Doc): Promise<SheetFile> {
  return inlineDatasets(db, { ...docToSheetFile(doc ?? (await loadDocument(db, sheet.id))), title: sheet.title }, sheet.labId)
}

/**
 * Result texts this process computed lately, per evaluator, by the SHA-256 of the canonical sheet file they were
 * computed from: the engine is deterministic, so the same file gives the same text, and freezing right after the
 * live sheet was compared (or freezing twice without an edit) needs no second evaluation. Bounded by characters.
 */
const MEMO_MAX_CHARS = 8_000_000
const MEMO_MAX_ENTRIES = 16
const memos = new WeakMap<Evaluator, Map<string, string>>()

function memoOf(evaluator: Evaluator): Map<string, string> {
  let memo = memos.get(evaluator)
  if (!memo) memos.set(evaluator, (memo = new Map()))
  return memo
}

function remember(memo: Map<string, string>, hash: string, results: string): void {
  // a cell stopped by its time budget might finish another time: such a result is not reused
  if (results.length > MEMO_MAX_CHARS || results.includes('budget for one cell and was stopped')) return
  memo.set(hash, results)
  let chars = 0
  for (const r of memo.values()) chars += r.length
  for (const [key, r] of memo) {
    if (chars <= MEMO_MAX_CHARS && memo.size <= MEMO_MAX_ENTRIES) break
    memo.delete(key) // oldest first: a Map iterates in insertion order
    chars -= r.length
  }
}

/**
 * Evaluates a canonical sheet file's text with the server's engine (the evaluation worker): the result object's
 * JSON text. `hash` is the text's SHA-256 (the caller has it already); a result computed from the same text lately
 * is reused.
 */
export async function evaluateOnServer(evaluator: Evaluator, text: string, budgetMs: number, hash: string = sha256Hex(text)): Promise<string> {
  const memo = memoOf(evaluator)
  const known = memo.get(hash)
  if (known !== undefined) {
    memo.delete(hash)
    memo.set(hash, known) // most recently used last
    return known
  }
  const outcome = await evaluator.evaluateText(text, budgetMs)
  if (outcome.ok) {
    remember(memo, hash, outcome.text)
    return outcome.text
  }
  switch (outcome.reason) {
    case 'invalid':
      throw new HttpError(422, `The sheet cannot be evaluated as it is: ${outcome.issues.map((i) => `${i.path || '(sheet)'} ${i.message}`).join('; ')}. Fix it and freeze again.`)
    case 'timeout':
      throw new HttpError(422, `The sheet took longer than ${Math.round(outcome.budgetMs / 1000)} s to evaluate, so it was not frozen. Make it lighter (shorter grids, fewer sweep steps) and freeze again.`)
    case 'memory':
      throw new HttpError(422, 'The sheet needs more memory to evaluate than the server gives one evaluation, so it was not frozen.')
    case 'busy':
      throw new HttpError(503, 'The server is busy evaluating other sheets. Try freezing again in a few seconds.')
    default:
      console.error(`freezing failed: ${outcome.message}`)
      throw new HttpError(500, 'The sheet could not be evaluated on the server. Please try again.')
  }
}

/**
 * The same parse and engine as the evaluation worker, on the calling thread and without its time budget: for the
 * demo seed at start, where starting a worker thread costs more than the sheets it evaluates.
 */
export const inProcessEvaluator: Evaluator = {
  async evaluate(text, budgetMs) {
    const outcome = await this.evaluateText(text, budgetMs)
    return outcome.ok ? { ok: true, json: new TextEncoder().encode(outcome.text) } : outcome
  },
  evaluateText(text) {
    const parsed = parseSheetFileText(text)
    if (!parsed.ok) return Promise.resolve({ ok: false, reason: 'invalid', issues: parsed.issues })
    return Promise.resolve({ ok: true, text: JSON.stringify(evaluateSheet(parsed.value)) })
  },
}

export interface FreezeOptions {
  evaluator?: Evaluator
  now?: number
}

/** Freezes the sheet's live document as a new snapshot. */
export async function freezeSnapshot(deps: { db: Db; config: Pick<AppConfig, 'evaluate'> }, sheet: SheetRow, userId: string, message: string, options: FreezeOptions = {}): Promise<SnapshotRow> {
  const doc = await loadDocument(deps.db, sheet.id)
  const file = canonicalJson(await liveSheetFile(deps.db, sheet, doc))
  const hash = sha256Hex(file)
  // the worker evaluates while this thread encodes the document's state
  const evaluation = evaluateOnServer(options.evaluator ?? sharedEvaluator(), file, deps.config.evaluate.budgetMs, hash)
  const docState = Buffer.from(Y.encodeStateAsUpdate(doc))
  doc.destroy()
  const results = await evaluation
  const row: SnapshotRow = {
    id: newId(),
    sheetId: sheet.id,
    labId: sheet.labId,
    docState,
    file,
    results,
    engineVersion: engineVersionOf(results),
    hash,
    message,
    createdBy: userId,
    createdAt: options.now ?? Date.now(),
  }
  if (isPostgres(deps.db)) await deps.db.insert(snapshots).values(row)
  else insertStatement(deps.db).run(row)
  return row
}

/** The engine version a result text names: its last member, `"engine":"…"}` (the worker runs this build's engine). */
function engineVersionOf(results: string): string {
  const at = results.lastIndexOf('"engine":"')
  const end = results.length - 2
  if (at < 0 || !results.endsWith('"}')) return ENGINE_VERSION
  const version = results.slice(at + '"engine":"'.length, end)
  return version.includes('"') ? ENGINE_VERSION : version
}

/** The snapshot insert, prepared once per SQLite connection (a freeze builds no SQL). */
const inserts = new WeakMap<object, ReturnType<typeof prepareInsert>>()

function prepareInsert(db: Db) {
  const p = (name: keyof SnapshotRow) => sql.placeholder(name)
  return db
    .insert(snapshots)
    .values({
      id: p('id'), sheetId: p('sheetId'), labId: p('labId'), docState: p('docState'), file: p('file'), results: p('results'),
      engineVersion: p('engineVersion'), hash: p('hash'), message: p('message'), createdBy: p('createdBy'), createdAt: p('createdAt'),
    })
    .prepare()
}

function insertStatement(db: Db): ReturnType<typeof prepareInsert> {
  let statement = inserts.get(db.$client)
  if (!statement) inserts.set(db.$client, (statement = prepareInsert(db)))
  return statement
}

export async function snapshotById(db: Db, id: string): Promise<SnapshotRow | undefined> {
  return (await db.select().from(snapshots).where(eq(snapshots.id, id)))[0]
}

export async function userName(db: Db, userId: string): Promise<string> {
  return (await db.select({ name: users.name }).from(users).where(eq(users.id, userId)))[0]?.name ?? 'a former member'
}

/** Guest links still usable (neither revoked nor expired) and reviews of a snapshot. */
async function usage(db: Db, snapshotId: string, now = Date.now()): Promise<{ guestLinkCount: number; reviewCount: number }> {
  const guestLinkCount =
    (
      await db
        .select({ n: count() })
        .from(guestLinks)
        .where(and(eq(guestLinks.snapshotId, snapshotId), isNull(guestLinks.revokedAt), gt(guestLinks.expiresAt, now)))
    )[0]?.n ?? 0
  const reviewCount = (await db.select({ n: count() }).from(reviews).where(eq(reviews.snapshotId, snapshotId)))[0]?.n ?? 0
  return { guestLinkCount, reviewCount }
}

function titleOf(row: SnapshotRow): string {
  return (JSON.parse(row.file) as { title?: string }).title ?? 'Untitled sheet'
}

export async function snapshotSummary(db: Db, row: SnapshotRow): Promise<SnapshotSummary> {
  return {
    id: row.id,
    sheetId: row.sheetId,
    labId: row.labId,
    hash: row.hash,
    createdAt: row.createdAt,
    createdBy: row.createdBy,
    authorName: await userName(db, row.createdBy),
    message: row.message,
    engineVersion: row.engineVersion,
    title: titleOf(row),
    reviewState: await reviewStateOf(db, row),
    ...(await usage(db, row.id)),
  }
}

/**
 * A snapshot's sheet file and results as people see them: each spectrum's columns in the order the sheet showed them
 * when it was frozen. The stored file sorts every object's keys (its hash needs one text), which would list a
 * spectrum's columns alphabetically (R, T, wavelength) on the page, in its CSV and in a restored sheet; the frozen
 * document (`docState`) keeps the order they were imported in. The stored texts are not changed, so the exported
 * file and its hash stay as they were.
 */
export function snapshotContent(row: Pick<SnapshotRow, 'file' | 'results' | 'docState'>): { file: SnapshotDetail['file']; results: SnapshotDetail['results'] } {
  const file = JSON.parse(row.file) as SnapshotDetail['file']
  const results = JSON.parse(row.results) as SnapshotDetail['results']
  const spectra = (file.cells as { id?: string; kind: string; columns?: Record<string, unknown> }[]).filter((c) => c.kind === 'spectrum' && c.id && c.columns)
  // a sheet without a spectrum has nothing to reorder: its frozen document is not decoded
  if (spectra.length === 0) return { file, results }
  const order = spectrumColumnOrder(row.docState)
  for (const cell of spectra) cell.columns = inOrder(cell.columns!, order.get(cell.id!))
  for (const cell of results.cells) {
    const value = cell.value as { columns?: Record<string, unknown> } | null
    if (cell.id && order.has(cell.id) && value && typeof value === 'object' && value.columns && typeof value.columns === 'object')
      value.columns = inOrder(value.columns, order.get(cell.id))
  }
  return { file, results }
}

/** Each spectrum cell's column names, by cell id, in the frozen document's order. */
function spectrumColumnOrder(docState: Uint8Array): Map<string, string[]> {
  const doc = new Y.Doc()
  const order = new Map<string, string[]>()
  try {
    Y.applyUpdate(doc, docState)
    for (const map of cellsOf(doc).toArray()) {
      if (!(map instanceof Y.Map) || map.get('kind') !== 'spectrum') continue
      const id = map.get('id')
      const columns = map.get('columns')
      if (typeof id === 'string' && columns && typeof columns === 'object') order.set(id, Object.keys(columns))
    }
  } finally {
    doc.destroy()
  }
  return order
}

/** `record` with the keys named in `names` first, in that order, then any others as they were. */
function inOrder<T>(record: Record<string, T>, names: readonly string[] = []): Record<string, T> {
  const out: Record<string, T> = {}
  for (const name of names) if (Object.hasOwn(record, name)) out[name] = record[name]
  for (const [name, value] of Object.entries(record)) if (!Object.hasOwn(out, name)) out[name] = value
  return out
}

export async function snapshotDetail(db: Db, row: SnapshotRow): Promise<SnapshotDetail> {
  return { ...(await snapshotSummary(db, row)), ...snapshotContent(row) }
}

/** A sheet's snapshots, newest first. */
export async function listSnapshots(db: Db, sheetId: string): Promise<SnapshotSummary[]> {
  const rows = await db.select().from(snapshots).where(eq(snapshots.sheetId, sheetId)).orderBy(desc(snapshots.createdAt), desc(snapshots.id))
  return Promise.all(rows.map((row) => snapshotSummary(db, row)))
}

/**
 * The exported snapshot file: the sheet file with a `snapshot` member holding its hash and stored results, so
 * `npm run evaluate -- FILE --check` can recompute it anywhere.
 */
export async function snapshotFileText(db: Db, row: SnapshotRow): Promise<string> {
  const file = JSON.parse(row.file) as Record<string, unknown>
  const snapshot = {
    hash: row.hash,
    engineVersion: row.engineVersion,
    createdAt: new Date(row.createdAt).toISOString(),
    author: await userName(db, row.createdBy),
    message: row.message,
    results: JSON.parse(row.results) as unknown,
  }
  return JSON.stringify({ ...file, [SNAPSHOT_MEMBER]: snapshot }, null, 2) + '\n'
}

export function snapshotDownloadName(row: SnapshotRow): string {
  return `${titleOf(row)} ${shortHash(row.hash)}`
}

/** Deletes a snapshot (owners only, checked by the route): refused while a review or a usable guest link uses it. */
export async function deleteSnapshot(db: Db, row: SnapshotRow): Promise<void> {
  const used = await usage(db, row.id)
  if (used.reviewCount > 0) throw conflict('This snapshot has a review, so it is kept as the record of what was reviewed.')
  if (used.guestLinkCount > 0) throw conflict('A guest link still shows this snapshot. Revoke it first, then delete the snapshot.')
  await db.delete(snapshots).where(eq(snapshots.id, row.id))
}

/** A new sheet in the snapshot's lab made from its file (cells keep their ids). */
export async function restoreAsNewSheet(deps: Pick<AppDeps, 'db'>, row: SnapshotRow, userId: string, title?: string): Promise<SheetRow> {
  const parsed = parseSheetFile(snapshotContent(row).file)
  if (!parsed.ok) throw new HttpError(500, 'The snapshot file could not be read back.')
  const file = withCellIds(parsed.value, newCellId)
  return createSheet(deps, row.labId, userId, { ...file, title: title ?? `${file.title} (from ${shortHash(row.hash)})`.slice(0, 200) })
}
