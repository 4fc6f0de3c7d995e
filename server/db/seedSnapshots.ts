/**
 * The demo lab's review story, seeded after its sheets: two snapshots of the band-edge sheet (Film H-17) by its
 * editor, a review of each — the first sent back with changes requested, the second approved — an open review of the
 * thickness study waiting for the reviewer, a comment thread on the first snapshot's Tauc fit, and a live guest link
 * to the approved snapshot. The guest link's token is derived from the server's secret, so `npm start` can print its
 * address on every start without storing the token. Everyone and everything here is invented for the demo.
 */
import { createHmac } from 'node:crypto'
import { and, eq, isNull } from 'drizzle-orm'
import type { Db } from './client'
import { comments, guestLinks, reviewDecisions, reviews, sheets, type Role } from './tables'
import type { AppConfig } from '../config'
import { seedDocument, loadSheetFile } from '../services/documents'
import { freezeSnapshot, inProcessEvaluator } from '../services/snapshots'
import { createGuestLink, guestLinkState, guestUrl } from '../services/guestLinks'
import { hashToken, newId } from '../services/tokens'
import type { SheetFile } from '../../shared/schema/sheet'
import { transact } from './transact'

export const DEMO_GUEST_NOTE = 'For the referee of our H-17 paper (demo link)'
const HOUR = 3600_000
const DAY = 24 * HOUR

/** The demo guest link's token: an HMAC of a fixed label under the server's secret (43 base64url characters). */
export function demoGuestToken(secret: Uint8Array): string {
  return createHmac('sha256', secret).update('penumbra demo guest link').digest('base64url')
}

/** The demo guest link's address while it is usable (not revoked, not expired), else null. */
export async function demoGuestUrl(db: Db, secret: Uint8Array, config: Pick<AppConfig, 'publicUrl'>): Promise<string | null> {
  const token = demoGuestToken(secret)
  const [row] = await db.select().from(guestLinks).where(and(eq(guestLinks.tokenHash, hashToken(token)), isNull(guestLinks.revokedAt)))
  return row && guestLinkState(row) === 'active' ? guestUrl({ config }, token) : null
}

export interface SnapshotSeed {
  snapshots: string[]
  guestUrl: string
}

/**
 * Seeds the review story into the demo lab. `bandEdgeSheetId` is the editor's Film H-17 sheet; `otherSheetId` an
 * owner's sheet for the open review (skipped when absent).
 */
export async function seedSnapshotDemo(
  deps: { db: Db; config: Pick<AppConfig, 'evaluate' | 'publicUrl'> },
  secret: Uint8Array,
  lab: { labId: string; users: Record<Role, string>; bandEdgeSheetId: string; otherSheetId?: string },
  now = Date.now(),
): Promise<SnapshotSeed> {
  const { db } = deps
  const { users } = lab
  const [sheet] = await db.select().from(sheets).where(eq(sheets.id, lab.bandEdgeSheetId))
  if (!sheet) throw new Error('demo seed: the band-edge sheet is missing')
  const final = (await loadSheetFile(db, sheet.id)) as SheetFile & { cells: Record<string, unknown>[] }

  // first version: the Tauc window started inside the Urbach tail
  const first = structuredClone(final)
  const tauc = (first.cells as Record<string, unknown>[]).find((c) => c.id === 'h17-tauc')
  if (tauc) tauc.from = 1.48
  await seedDocument(db, sheet.id, first as SheetFile)
  const s1 = await freezeSnapshot(deps, sheet, users.editor, 'First edge model, as measured after the 450 °C anneal', { now: now - 3 * DAY, evaluator: inProcessEvaluator })
  await seedDocument(db, sheet.id, final as SheetFile)
  const s2 = await freezeSnapshot(deps, sheet, users.editor, 'Tauc window moved above the tail (1.62–1.85 eV)', { now: now - 1 * DAY, evaluator: inProcessEvaluator })

  const review = (snapshotId: string, requestedBy: string, note: string, at: number, decisions: { reviewerId: string; hash: string; decision: 'approved' | 'changes-requested' | null; note: string | null; at: number }[]) =>
    transact(db, async (tx) => {
      const id = newId()
      await tx.insert(reviews).values({ id, snapshotId, sheetId: sheet.id, labId: lab.labId, requestedBy, note, createdAt: at })
      for (const d of decisions)
        await tx
          .insert(reviewDecisions)
          .values({ reviewId: id, reviewerId: d.reviewerId, decision: d.decision, note: d.note, snapshotHash: d.decision ? d.hash : null, decidedAt: d.decision ? d.at : null })
      return id
    })
  await review(s1.id, users.editor, 'Could you check the band gap before I send it to Mira?', now - 3 * DAY + HOUR, [
    { reviewerId: users.reviewer, hash: s1.hash, decision: 'changes-requested', note: 'The Tauc window starts at 1.48 eV, inside the Urbach tail (fitted up to 1.50 eV); start it above the tail.', at: now - 2 * DAY },
  ])
  await review(s2.id, users.editor, 'Window moved as you suggested.', now - 1 * DAY + HOUR, [
    { reviewerId: users.reviewer, hash: s2.hash, decision: 'approved', note: 'Eg now agrees with the edge model within its error. Approved.', at: now - 12 * HOUR },
  ])
  if (lab.otherSheetId) {
    const [other] = await db.select().from(sheets).where(eq(sheets.id, lab.otherSheetId))
    if (other) {
      const s3 = await freezeSnapshot(deps, other, users.owner, 'Thickness study for the proposal draft', { now: now - 6 * HOUR, evaluator: inProcessEvaluator })
      await transact(db, async (tx) => {
        const reviewId = newId()
        await tx.insert(reviews).values({ id: reviewId, snapshotId: s3.id, sheetId: other.id, labId: lab.labId, requestedBy: users.owner, note: 'Does 1 µm absorb enough for the proposal?', createdAt: now - 5 * HOUR })
        await tx.insert(reviewDecisions).values({ reviewId, reviewerId: users.reviewer })
      })
    }
  }

  // a thread on the first snapshot's Tauc fit, resolved by the second
  const thread = newId()
  const comment = (id: string, parentId: string | null, authorId: string, text: string, at: number, resolved = false) =>
    db.insert(comments).values({ id, sheetId: sheet.id, labId: lab.labId, cellId: 'h17-tauc', snapshotId: s1.id, parentId, text, authorId, resolved, resolvedBy: resolved ? users.editor : null, createdAt: at, updatedAt: at })
  await comment(thread, null, users.reviewer, '@tomas the fit window starts at 1.48 eV, where the tail still bends the Tauc plot. Is that on purpose?', now - 2 * DAY - HOUR, true)
  await comment(newId(), thread, users.editor, 'No — moved it to 1.62 eV in the next snapshot. Eg went up by about 8 meV (1.512 → 1.520 eV).', now - 1 * DAY - HOUR)

  const link = await createGuestLink(deps, s2, users.owner, { expiresInDays: 90, note: DEMO_GUEST_NOTE, token: demoGuestToken(secret), now })
  return { snapshots: [s1.id, s2.id], guestUrl: link.url }
}
