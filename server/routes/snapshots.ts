/**
 * Snapshots, reviews, comments and guest links (DESIGN §11 item 5):
 *   /api/sheets/:sheetId/snapshots     POST freeze (owner, editor), GET timeline (members)
 *   /api/sheets/:sheetId/comments      POST (owner, editor, reviewer), GET (members), GET …/events (live stream)
 *   /api/snapshots/:snapshotId         GET, DELETE (owner), /file, /compare/:b, /restore, /cells/:cellId/csv,
 *                                      /reviews (POST owner/editor, GET), /guest-links (POST owner/editor, GET)
 *   /api/reviews/:reviewId             GET, PATCH decide (the reviewers asked)
 *   /api/labs/:labId/reviews           GET the caller's queue
 *   /api/comments/:commentId           PATCH resolve / reopen (owner, editor, reviewer)
 *   /api/guest-links/:linkId           DELETE revoke (owner, editor)
 *   /api/guest/:token                  GET the one snapshot, no session
 * No route changes a snapshot.
 */
import { Router, type Request, type Response } from 'express'
import type { AppDeps } from '../deps'
import { requireUser } from '../middleware/auth'
import { allowRoles, loadLab, loadSheet, loadSnapshot } from '../middleware/roles'
import { limiter } from '../middleware/rateLimits'
import { parse } from '../middleware/validate'
import { COMMENT_ROLES, roleInLab, WRITE_ROLES } from '../services/access'
import {
  deleteSnapshot, evaluateOnServer, freezeSnapshot, listSnapshots, liveSheetFile, restoreAsNewSheet, sha256Hex, snapshotById,
  snapshotDetail, snapshotDownloadName, snapshotFileText, snapshotSummary, type SnapshotRow,
} from '../services/snapshots'
import { createReview, decideReview, reviewById, reviewQueue, reviewReply, snapshotReviews } from '../services/reviews'
import { commentById, createComment, listComments, setResolved } from '../services/comments'
import { subscribeComments } from '../services/commentEvents'
import { createGuestLink, guestLinkById, guestSnapshot, listGuestLinks, openGuestLink, revokeGuestLink } from '../services/guestLinks'
import { snapshotCellCsv } from '../services/seriesCsv'
import { sharedEvaluator } from '../services/evaluation'
import { sheetReply } from '../services/sheets'
import { contentDisposition } from '../services/sheets'
import { canonicalJson } from '../../shared/snapshot/canonical'
import { compareSheets, type CompareSide } from '../../shared/snapshot/compare'
import type { EvaluationResult } from '../../shared/schema/result'
import {
  createCommentBody, createGuestLinkBody, createReviewBody, createSnapshotBody, decideReviewBody, restoreSnapshotBody, updateCommentBody,
  type CompareReply,
} from '../../shared/schema/api'
import { SHEET_MEDIA_TYPE } from '../../shared/schema/sheet'
import { forbidden, notFound } from '../errors'
import { sheetAccess } from '../services/access'


const COMMENTERS_ONLY = 'Only owners, editors and reviewers may comment; viewers read.'

/** Headers of everything a guest is shown: never indexed, never told where it came from. */
export function guestHeaders(res: Response): void {
  res.set('X-Robots-Tag', 'noindex, nofollow')
  res.set('Referrer-Policy', 'no-referrer')
}

/** `?with=a,b`: further series on the same grid as the cell's (as the live sheet's CSV route takes them). */
function extraSeries(query: Request['query']): string[] {
  return typeof query.with === 'string' && query.with ? query.with.split(',').map((s) => s.trim()).filter(Boolean).slice(0, 20) : []
}

function sendCsv(res: Response, { fileName, csv }: { fileName: string; csv: string }): void {
  res.set('Content-Type', 'text/csv; charset=utf-8')
  res.set('Content-Disposition', contentDisposition(fileName))
  res.send(csv)
}

function side(row: SnapshotRow): CompareSide {
  return { cells: (JSON.parse(row.file) as { cells: CompareSide['cells'] }).cells, results: JSON.parse(row.results) as EvaluationResult }
}

export function snapshotRoutes(deps: AppDeps) {
  const { db } = deps
  const sheet = loadSheet(deps)
  const snapshot = loadSnapshot(deps)
  const commenters = allowRoles(COMMENT_ROLES, COMMENTERS_ONLY)
  const evaluator = () => deps.evaluator ?? sharedEvaluator()

  // /api/sheets/:sheetId/…
  const sheetScoped = Router({ mergeParams: true })
  sheetScoped.use(requireUser)
  sheetScoped.post('/snapshots', sheet, allowRoles(WRITE_ROLES, 'Only owners and editors may freeze snapshots.'), async (req, res) => {
    const { message } = parse(createSnapshotBody, req.body)
    const row = await freezeSnapshot(deps, req.sheet!, req.user!.id, message, { evaluator: evaluator() })
    res.status(201).location(`/api/snapshots/${row.id}`).json(await snapshotSummary(db, row))
  })
  sheetScoped.get('/snapshots', sheet, async (req, res) => {
    res.json({ snapshots: await listSnapshots(db, req.sheet!.id) })
  })
  sheetScoped.post('/comments', sheet, commenters, async (req, res) => {
    const body = parse(createCommentBody, req.body)
    res.status(201).json(await createComment(deps, req.sheet!, req.user!.id, body))
  })
  sheetScoped.get('/comments', sheet, async (req, res) => {
    const which = typeof req.query.snapshotId === 'string' && req.query.snapshotId ? req.query.snapshotId : undefined
    res.json({ comments: await listComments(db, req.sheet!.id, which) })
  })
  sheetScoped.get('/comments/events', sheet, (req, res) => {
    const sheetId = req.sheet!.id
    const userId = req.user!.id
    res.status(200).set({ 'Content-Type': 'text/event-stream; charset=utf-8', 'Cache-Control': 'no-store', Connection: 'keep-alive', 'X-Accel-Buffering': 'no' })
    res.flushHeaders()
    res.write(': comments of this sheet, live\n\n')
    // a member removed since the stream opened hears nothing more, and the stream ends; comments are sent in order
    let sending = Promise.resolve()
    const unsubscribe = subscribeComments(sheetId, (comment) => {
      sending = sending
        .then(async () => {
          if (res.writableEnded) return
          if (!(await sheetAccess(db, sheetId, userId)).role) return void res.end()
          res.write(`event: comment\ndata: ${JSON.stringify(comment)}\n\n`)
        })
        .catch(() => void res.end())
    })
    const keepAlive = setInterval(() => res.write(': still here\n\n'), 25_000)
    keepAlive.unref()
    req.on('close', () => {
      clearInterval(keepAlive)
      unsubscribe()
    })
  })

  // /api/snapshots/:snapshotId
  const snapshots = Router()
  snapshots.use(requireUser)
  snapshots.get('/:snapshotId', snapshot, async (req, res) => {
    res.json(await snapshotDetail(db, req.snapshot!))
  })
  snapshots.delete('/:snapshotId', snapshot, allowRoles(['owner'], 'Only owners may delete snapshots.'), async (req, res) => {
    await deleteSnapshot(db, req.snapshot!)
    res.status(204).end()
  })
  snapshots.get('/:snapshotId/file', snapshot, async (req, res) => {
    res.set('Content-Type', `${SHEET_MEDIA_TYPE}; charset=utf-8`)
    res.set('Content-Disposition', contentDisposition(`${snapshotDownloadName(req.snapshot!)}.penumbra.json`))
    res.send(await snapshotFileText(db, req.snapshot!))
  })
  snapshots.get('/:snapshotId/cells/:cellId/csv', snapshot, (req, res) => {
    sendCsv(res, snapshotCellCsv(req.snapshot!, String(req.params.cellId), extraSeries(req.query)))
  })
  snapshots.get('/:snapshotId/compare/:other', snapshot, async (req, res) => {
    const a = req.snapshot!
    const other = String(req.params.other)
    let b: CompareSide
    let bInfo: CompareReply['b']
    if (other === 'live') {
      const file = canonicalJson(await liveSheetFile(db, req.sheet!))
      const hash = sha256Hex(file)
      const results = JSON.parse(await evaluateOnServer(evaluator(), file, deps.config.evaluate.budgetMs, hash)) as EvaluationResult
      b = { cells: (JSON.parse(file) as { cells: CompareSide['cells'] }).cells, results }
      bInfo = { id: 'live', hash, createdAt: null }
    } else {
      const row = await snapshotById(db, other)
      if (!row || !(await roleInLab(db, row.labId, req.user!.id))) throw notFound('No such snapshot to compare with, or you are not a member of its lab.')
      b = side(row)
      bInfo = { id: row.id, hash: row.hash, createdAt: row.createdAt }
    }
    const reply: CompareReply = { a: { id: a.id, hash: a.hash, createdAt: a.createdAt }, b: bInfo, ...compareSheets(side(a), b) }
    res.json(reply)
  })
  snapshots.post('/:snapshotId/restore', snapshot, allowRoles(WRITE_ROLES, 'Only owners and editors may restore a snapshot.'), async (req, res) => {
    const { title } = parse(restoreSnapshotBody, req.body)
    const row = await restoreAsNewSheet(deps, req.snapshot!, req.user!.id, title)
    res.status(201).location(`/api/sheets/${row.id}`).json(await sheetReply(deps, row, req.lab!, req.role!, req.user!.id))
  })
  snapshots.post('/:snapshotId/reviews', snapshot, allowRoles(WRITE_ROLES, 'Only owners and editors may ask for a review.'), async (req, res) => {
    const { reviewerIds, note } = parse(createReviewBody, req.body)
    res.status(201).json(await createReview(deps, req.snapshot!, req.user!.id, reviewerIds, note))
  })
  snapshots.get('/:snapshotId/reviews', snapshot, async (req, res) => {
    res.json({ reviews: await snapshotReviews(db, req.snapshot!.id) })
  })
  snapshots.post('/:snapshotId/guest-links', snapshot, allowRoles(WRITE_ROLES, 'Only owners and editors may make guest links.'), async (req, res) => {
    const body = parse(createGuestLinkBody, req.body)
    res.status(201).json(await createGuestLink(deps, req.snapshot!, req.user!.id, body))
  })
  snapshots.get('/:snapshotId/guest-links', snapshot, async (req, res) => {
    res.json({ links: await listGuestLinks(db, req.snapshot!.id) })
  })

  // /api/reviews/:reviewId
  const reviews = Router()
  reviews.use(requireUser)
  const loadReview = async (id: string, userId: string) => {
    const row = await reviewById(db, id)
    const role = row ? await roleInLab(db, row.labId, userId) : null
    if (!row || !role) throw notFound('No such review, or you are not a member of its lab.')
    return { row, role }
  }
  reviews.get('/:reviewId', async (req, res) => {
    res.json(await reviewReply(db, (await loadReview(String(req.params.reviewId), req.user!.id)).row))
  })
  reviews.patch('/:reviewId', async (req, res) => {
    const { row, role } = await loadReview(String(req.params.reviewId), req.user!.id)
    if (role !== 'owner' && role !== 'reviewer') throw forbidden(role === 'viewer' ? 'Viewers see decisions but cannot decide.' : 'Only the reviewers asked may decide a review.')
    const { decision, note } = parse(decideReviewBody, req.body)
    res.json(await decideReview(deps, row, req.user!.id, decision, note))
  })

  // /api/labs/:labId/reviews
  const labReviews = Router({ mergeParams: true })
  labReviews.use(requireUser)
  labReviews.get('/', loadLab(deps), async (req, res) => {
    res.json(await reviewQueue(db, req.lab!.id, req.user!.id))
  })

  // /api/comments/:commentId
  const commentsRouter = Router()
  commentsRouter.use(requireUser)
  commentsRouter.patch('/:commentId', async (req, res) => {
    const row = await commentById(db, String(req.params.commentId))
    const role = row ? await roleInLab(db, row.labId, req.user!.id) : null
    if (!row || !role) throw notFound('No such comment, or you are not a member of its lab.')
    if (!COMMENT_ROLES.includes(role)) throw forbidden(COMMENTERS_ONLY)
    const { resolved } = parse(updateCommentBody, req.body)
    res.json(await setResolved(db, row, resolved, req.user!.id))
  })

  // /api/guest-links/:linkId
  const links = Router()
  links.use(requireUser)
  links.delete('/:linkId', async (req, res) => {
    const row = await guestLinkById(db, String(req.params.linkId))
    const role = row ? await roleInLab(db, row.labId, req.user!.id) : null
    if (!row || !role) throw notFound('No such guest link, or you are not a member of its lab.')
    if (!WRITE_ROLES.includes(role)) throw forbidden('Only owners and editors may revoke guest links.')
    await revokeGuestLink(db, row)
    res.status(204).end()
  })

  // /api/guest/:token — no session: the token is the proof, and it shows one snapshot only
  const guest = Router()
  const tokenLimit = limiter(deps.config.limits.token, 'attempts with guest links from this address', { onlyFailures: true, store: deps.rateLimitStores?.('guest-links') })
  guest.use((_req, res, next) => {
    guestHeaders(res)
    next()
  })
  guest.get('/:token', tokenLimit, async (req, res) => {
    const { link, snapshot: snap } = await openGuestLink(db, String(req.params.token))
    res.json(await guestSnapshot(db, link, snap))
  })
  guest.get('/:token/cells/:cellId/csv', tokenLimit, async (req, res) => {
    // a download from the page is not another view of it
    const { snapshot: snap } = await openGuestLink(db, String(req.params.token), { countView: false })
    sendCsv(res, snapshotCellCsv(snap, String(req.params.cellId), extraSeries(req.query)))
  })

  return { sheetScoped, snapshots, reviews, labReviews, comments: commentsRouter, links, guest }
}
