/**
 * Snapshots: freeze a sheet (its Yjs state, its canonical sheet file with datasets inlined, the results the server's
 * engine computed from that file, the engine version and the file's SHA-256), list them, read them, export them,
 * restore them into a new sheet, and delete them (owners, when nothing uses them). Nothing here updates a snapshot.
 */
import { createHash } from 'node:crypto'
import { and, count, desc, eq, gt, isNull } from 'drizzle-orm'
import * as Y from 'yjs'
import type { AppDeps } from '../deps'
import type { AppConfig } from '../config'
import type { Db } from '../db/client'
import { guestLinks, reviews, snapshots, users } from '../db/schema'
import { docToSheetFile, newCellId } from '../../shared/doc/sheetDoc'
import { canonicalJson, SNAPSHOT_MEMBER } from '../../shared/snapshot/canonical'
import { parseSheetFile, withCellIds, type DatasetColumn, type SheetFile } from '../../shared/schema/sheet'
import { shortHash, type SnapshotDetail, type SnapshotSummary } from '../../shared/schema/api'
import { conflict, HttpError } from '../errors'
import type { SheetRow } from '../types'
import { loadDocument } from './documents'
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
 * The seam for stored datasets: the columns of a dataset a spectrum cell points at (`datasetId`), so a snapshot's
 * file stands alone. Until datasets live in SQLite, spectrum cells carry their columns in the document and this
 * finds nothing (the cell's own columns are kept).
 */
export function datasetColumnsFor(_db: Db, _labId: string): (datasetId: string) => Record<string, DatasetColumn> | undefined {
  return () => undefined
}

/** The sheet file a document holds now, titled as the sheet is, datasets inlined. */
export function liveSheetFile(db: Db, sheet: Pick<SheetRow, 'id' | 'labId' | 'title'>, doc: Y.Doc = loadDocument(db, sheet.id)): SheetFile {
  return { ...docToSheetFile(doc, { datasetColumns: datasetColumnsFor(db, sheet.labId) }), title: sheet.title }
}

/** Evaluates a sheet file's text with the server's engine (the evaluation worker): the result object's JSON text. */
export async function evaluateOnServer(evaluator: Evaluator, text: string, budgetMs: number): Promise<string> {
  const outcome = await evaluator.evaluate(text, budgetMs)
  if (outcome.ok) return Buffer.from(outcome.json.buffer, outcome.json.byteOffset, outcome.json.byteLength).toString('utf8')
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
  evaluate(text) {
    const parsed = parseSheetFileText(text)
    if (!parsed.ok) return Promise.resolve({ ok: false, reason: 'invalid', issues: parsed.issues })
    return Promise.resolve({ ok: true, json: new TextEncoder().encode(JSON.stringify(evaluateSheet(parsed.value))) })
  },
}

export interface FreezeOptions {
  evaluator?: Evaluator
  now?: number
}

/** Freezes the sheet's live document as a new snapshot. */
export async function freezeSnapshot(deps: { db: Db; config: Pick<AppConfig, 'evaluate'> }, sheet: SheetRow, userId: string, message: string, options: FreezeOptions = {}): Promise<SnapshotRow> {
  const doc = loadDocument(deps.db, sheet.id)
  const docState = Buffer.from(Y.encodeStateAsUpdate(doc))
  const file = canonicalJson(liveSheetFile(deps.db, sheet, doc))
  doc.destroy()
  const results = await evaluateOnServer(options.evaluator ?? sharedEvaluator(), file, deps.config.evaluate.budgetMs)
  // the worker runs this build's engine; its version is the last member of the result object
  const engineVersion = /"engine":"([^"]*)"\}$/.exec(results)?.[1] ?? ENGINE_VERSION
  const row: SnapshotRow = {
    id: newId(),
    sheetId: sheet.id,
    labId: sheet.labId,
    docState,
    file,
    results,
    engineVersion,
    hash: sha256Hex(file),
    message,
    createdBy: userId,
    createdAt: options.now ?? Date.now(),
  }
  deps.db.insert(snapshots).values(row).run()
  return row
}

export function snapshotById(db: Db, id: string): SnapshotRow | undefined {
  return db.select().from(snapshots).where(eq(snapshots.id, id)).get()
}

export function userName(db: Db, userId: string): string {
  return db.select({ name: users.name }).from(users).where(eq(users.id, userId)).get()?.name ?? 'a former member'
}

/** Guest links still usable (neither revoked nor expired) and reviews of a snapshot. */
function usage(db: Db, snapshotId: string, now = Date.now()): { guestLinkCount: number; reviewCount: number } {
  const guestLinkCount =
    db
      .select({ n: count() })
      .from(guestLinks)
      .where(and(eq(guestLinks.snapshotId, snapshotId), isNull(guestLinks.revokedAt), gt(guestLinks.expiresAt, now)))
      .get()?.n ?? 0
  const reviewCount = db.select({ n: count() }).from(reviews).where(eq(reviews.snapshotId, snapshotId)).get()?.n ?? 0
  return { guestLinkCount, reviewCount }
}

function titleOf(row: SnapshotRow): string {
  return (JSON.parse(row.file) as { title?: string }).title ?? 'Untitled sheet'
}

export function snapshotSummary(db: Db, row: SnapshotRow): SnapshotSummary {
  return {
    id: row.id,
    sheetId: row.sheetId,
    labId: row.labId,
    hash: row.hash,
    createdAt: row.createdAt,
    createdBy: row.createdBy,
    authorName: userName(db, row.createdBy),
    message: row.message,
    engineVersion: row.engineVersion,
    title: titleOf(row),
    reviewState: reviewStateOf(db, row),
    ...usage(db, row.id),
  }
}

export function snapshotDetail(db: Db, row: SnapshotRow): SnapshotDetail {
  return { ...snapshotSummary(db, row), file: JSON.parse(row.file) as SnapshotDetail['file'], results: JSON.parse(row.results) as SnapshotDetail['results'] }
}

/** A sheet's snapshots, newest first. */
export function listSnapshots(db: Db, sheetId: string): SnapshotSummary[] {
  return db
    .select()
    .from(snapshots)
    .where(eq(snapshots.sheetId, sheetId))
    .orderBy(desc(snapshots.createdAt), desc(snapshots.id))
    .all()
    .map((row) => snapshotSummary(db, row))
}

/**
 * The exported snapshot file: the sheet file with a `snapshot` member holding its hash and stored results, so
 * `npm run evaluate -- FILE --check` can recompute it anywhere.
 */
export function snapshotFileText(db: Db, row: SnapshotRow): string {
  const file = JSON.parse(row.file) as Record<string, unknown>
  const snapshot = {
    hash: row.hash,
    engineVersion: row.engineVersion,
    createdAt: new Date(row.createdAt).toISOString(),
    author: userName(db, row.createdBy),
    message: row.message,
    results: JSON.parse(row.results) as unknown,
  }
  return JSON.stringify({ ...file, [SNAPSHOT_MEMBER]: snapshot }, null, 2) + '\n'
}

export function snapshotDownloadName(row: SnapshotRow): string {
  return `${titleOf(row)} ${shortHash(row.hash)}`
}

/** Deletes a snapshot (owners only, checked by the route): refused while a review or a usable guest link uses it. */
export function deleteSnapshot(db: Db, row: SnapshotRow): void {
  const used = usage(db, row.id)
  if (used.reviewCount > 0) throw conflict('This snapshot has a review, so it is kept as the record of what was reviewed.')
  if (used.guestLinkCount > 0) throw conflict('A guest link still shows this snapshot. Revoke it first, then delete the snapshot.')
  db.delete(snapshots).where(eq(snapshots.id, row.id)).run()
}

/** A new sheet in the snapshot's lab made from its file (cells keep their ids). */
export function restoreAsNewSheet(deps: Pick<AppDeps, 'db'>, row: SnapshotRow, userId: string, title?: string): SheetRow {
  const parsed = parseSheetFile(JSON.parse(row.file))
  if (!parsed.ok) throw new HttpError(500, 'The snapshot file could not be read back.')
  const file = withCellIds(parsed.value, newCellId)
  return createSheet(deps, row.labId, userId, { ...file, title: title ?? `${file.title} (from ${shortHash(row.hash)})`.slice(0, 200) })
}
