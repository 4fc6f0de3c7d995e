/** Snapshots of a sheet: freeze, timeline, one snapshot with its file and stored results, compare, the file download. */
import { compareReply, snapshotDetail, snapshotSummary, snapshotsReply, type CompareReply, type SnapshotDetail, type SnapshotSummary } from '../../shared/schema/review'
import { z } from 'zod'
import { evaluationReply, type EvaluationReply } from '../../shared/schema/api'
import { api, download, seg } from './client'

export type { CompareReply, SnapshotDetail, SnapshotSummary }

export function freezeSnapshot(sheetId: string, message: string): Promise<SnapshotSummary> {
  return api.post(`/api/sheets/${seg(sheetId)}/snapshots`, { message }, snapshotSummary)
}

/** The sheet's snapshots, newest first (sorted here too, so the order never depends on the server's). */
export async function listSnapshots(sheetId: string): Promise<SnapshotSummary[]> {
  const { snapshots } = await api.get(`/api/sheets/${seg(sheetId)}/snapshots`, snapshotsReply)
  return [...snapshots].sort((a, b) => b.createdAt - a.createdAt)
}

export function getSnapshot(snapshotId: string): Promise<SnapshotDetail> {
  return api.get(`/api/snapshots/${seg(snapshotId)}`, snapshotDetail)
}

/** Compares snapshot `a` with snapshot `b`, or with the live sheet when `b` is `live`. */
export function compareSnapshots(a: string, b: string | 'live'): Promise<CompareReply> {
  return api.get(`/api/snapshots/${seg(a)}/compare/${seg(b)}`, compareReply)
}

/** Downloads the snapshot's sheet file (with `snapshot: { hash, results }`, checkable by `npm run evaluate -- --check`). */
export function downloadSnapshotFile(snapshot: { id: string; hash: string }, title: string): Promise<string> {
  const safe = title.replace(/[\\/:*?"<>|]+/g, '_') || 'snapshot'
  return download(`/api/snapshots/${seg(snapshot.id)}/file`, `${safe}-${snapshot.hash.slice(0, 8)}.penumbra.json`)
}

const fileReply = z.looseObject({ cells: z.array(z.unknown()) })

/** The live sheet as a version to compare: its file now, and the server's evaluation of it. */
export async function liveVersion(sheetId: string): Promise<{ file: unknown; results: EvaluationReply }> {
  const file = await api.get(`/api/sheets/${seg(sheetId)}/file`, fileReply)
  const results = await api.post('/api/evaluate', file, evaluationReply)
  return { file, results }
}
