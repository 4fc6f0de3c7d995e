/** Snapshots of a sheet: freeze, timeline, one snapshot with its file and stored results, compare, downloads, restore. */
import { z } from 'zod'
import {
  compareReply,
  evaluationReply,
  sheetReply,
  snapshotReply,
  snapshotSummarySchema,
  snapshotsReply,
  type CompareReply,
  type EvaluationReply,
  type Sheet,
  type SnapshotDetail,
  type SnapshotSummary,
} from '../../shared/schema/api'
import { api, download, seg } from './client'

export type { CompareReply, SnapshotDetail, SnapshotSummary }

export function freezeSnapshot(sheetId: string, message: string): Promise<SnapshotSummary> {
  return api.post(`/api/sheets/${seg(sheetId)}/snapshots`, { message }, snapshotSummarySchema)
}

/** The sheet's snapshots, newest first. */
export async function listSnapshots(sheetId: string): Promise<SnapshotSummary[]> {
  return (await api.get(`/api/sheets/${seg(sheetId)}/snapshots`, snapshotsReply)).snapshots
}

export function getSnapshot(snapshotId: string): Promise<SnapshotDetail> {
  return api.get(`/api/snapshots/${seg(snapshotId)}`, snapshotReply)
}

/** Compares snapshot `a` (before) with snapshot `b` (after), or with the live sheet when `b` is `live`. */
export function compareSnapshots(a: string, b: string | 'live'): Promise<CompareReply> {
  return api.get(`/api/snapshots/${seg(a)}/compare/${seg(b)}`, compareReply)
}

function safe(text: string): string {
  return text.replace(/[\\/:*?"<>|]+/g, '_') || 'snapshot'
}

/** Downloads the snapshot's sheet file (with `snapshot: { hash, results }`, checkable by `npm run evaluate -- --check`). */
export function downloadSnapshotFile(snapshot: { id: string; hash: string; title: string }): Promise<string> {
  return download(`/api/snapshots/${seg(snapshot.id)}/file`, `${safe(snapshot.title)}-${snapshot.hash.slice(0, 10)}.penumbra.json`)
}

/** A snapshot as its reader reaches it: a member by its id, a guest by the guest link's token. */
export type SnapshotSource = { id: string; hash: string } | { token: string; hash: string }

/**
 * Downloads one cell's series of a snapshot as CSV (an array, a spectrum's columns, a sweep's table, a figure's
 * traces, a fit's residuals), written by the server from the stored results.
 */
export function downloadSeriesCsv(source: SnapshotSource, cell: { id: string; name?: string }): Promise<string> {
  const base = 'token' in source ? `/api/guest/${seg(source.token)}` : `/api/snapshots/${seg(source.id)}`
  return download(`${base}/cells/${seg(cell.id)}/csv`, `${safe(cell.name ?? 'series')}-${source.hash.slice(0, 10)}.csv`)
}

/** Makes a new sheet in the same lab from the snapshot's file. */
export function restoreIntoNewSheet(snapshotId: string, title?: string): Promise<Sheet> {
  return api.post(`/api/snapshots/${seg(snapshotId)}/restore`, title ? { into: 'new', title } : { into: 'new' }, sheetReply)
}

const fileReply = z.looseObject({ cells: z.array(z.unknown()) })

/** The live sheet as a version to compare: its file now, and the server's evaluation of it. */
export async function liveVersion(sheetId: string): Promise<{ file: unknown; results: EvaluationReply }> {
  const file = await api.get(`/api/sheets/${seg(sheetId)}/file`, fileReply)
  const results = await api.post('/api/evaluate', file, evaluationReply)
  return { file, results }
}
