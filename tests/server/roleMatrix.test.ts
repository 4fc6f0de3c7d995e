/**
 * The role matrix: every API route × owner, editor, reviewer, viewer, non-member and anonymous, with the exact status
 * each must get (DESIGN §2; issue contract: 401 without a session, 403 for a role that may not, 404 for what is not
 * yours to know of). Every cell runs against a fresh lab so one case's change cannot leak into the next.
 */
import { describe, expect, it } from 'vitest'
import { CALLERS, call, makeTestApp, seedLab, type Caller, type SeededLab, type TestApp } from '../utils/server'
import { requestReset, requestSignUp } from '../../server/services/accounts'
import { createInvitation } from '../../server/services/invitations'
import { labById } from '../../server/services/labs'
import { storeDataset } from '../../server/services/datasets'
import { createSheet } from '../../server/services/sheets'
import { loadSheetFile } from '../../server/services/documents'
import { freezeSnapshot } from '../../server/services/snapshots'

/** A small instrument export (invented values) for the upload routes. */
const CSV = 'Wavelength (nm),%T\n400,80\n410,81\n420,82\n'
const upload = (c: Ctx, path: string) => call(c.t, c.lab.cookie(c.caller)).post(path).attach('file', Buffer.from(CSV), 'filmB.csv')
import { createReview } from '../../server/services/reviews'
import { createComment } from '../../server/services/comments'
import { createGuestLink, revokeGuestLink, guestLinkById } from '../../server/services/guestLinks'
import { sheetAccess } from '../../server/services/access'

const SHEET_FILE = {
  format: 'penumbra.sheet',
  version: 1,
  title: 'Imported edge model',
  cells: [
    { kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
    { kind: 'formula', name: 'lambda_g', source: 'photon_wavelength(Eg*eV)', unit: 'nm' },
  ],
}

interface Ctx {
  t: TestApp
  lab: SeededLab
  caller: Caller
  /** Tokens of mailed links prepared for this case. */
  resetToken: string
  confirmToken: string
  invitationToken: string
  invitationId: string
  /** A dataset of the lab, and a sheet with a spectrum cell whose CSV can be downloaded. */
  datasetId: string
  csvSheetId: string
  csvCellId: string
}

type Send = (c: Ctx) => PromiseLike<{ status: number; body: unknown }>
type Expect = [owner: number, editor: number, reviewer: number, viewer: number, outsider: number, anonymous: number]

const self = (c: Ctx) => (c.caller === 'anonymous' ? c.lab.users.viewer.id : c.lab.users[c.caller].id)

const ROUTES: { route: string; send: Send; expect: Expect }[] = [
  { route: 'GET /api/health', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/health'), expect: [200, 200, 200, 200, 200, 200] },
  { route: 'POST /api/auth/sign-up', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/sign-up', { email: 'newcomer@elsewhere.example', name: 'New Comer', password: 'long enough password' }), expect: [201, 201, 201, 201, 201, 201] },
  { route: 'POST /api/auth/confirm', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/confirm', { token: c.confirmToken, password: 'pending person password' }), expect: [200, 200, 200, 200, 200, 200] },
  { route: 'POST /api/auth/sign-in', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/sign-in', { email: c.lab.users.owner.email, password: c.lab.users.owner.password }), expect: [200, 200, 200, 200, 200, 200] },
  { route: 'POST /api/auth/sign-out', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/sign-out'), expect: [204, 204, 204, 204, 204, 204] },
  // nobody signed in is an answer there ({ user: null }), not an error; every other route below needs a session
  { route: 'GET /api/auth/me', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/auth/me'), expect: [200, 200, 200, 200, 200, 200] },
  { route: 'PATCH /api/auth/me', send: (c) => call(c.t, c.lab.cookie(c.caller)).patch('/api/auth/me', { name: 'Renamed' }), expect: [200, 200, 200, 200, 200, 401] },
  { route: 'POST /api/auth/password', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/password', { currentPassword: c.lab.users.owner.password, newPassword: 'a brand new password' }), expect: [204, 204, 204, 204, 204, 401] },
  { route: 'POST /api/auth/reset-request', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/reset-request', { email: c.lab.users.viewer.email }), expect: [202, 202, 202, 202, 202, 202] },
  { route: 'POST /api/auth/reset', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/auth/reset', { token: c.resetToken, password: 'a brand new password' }), expect: [204, 204, 204, 204, 204, 204] },
  { route: 'GET /api/labs', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/labs'), expect: [200, 200, 200, 200, 200, 401] },
  { route: 'POST /api/labs', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/labs', { name: 'Another lab' }), expect: [201, 201, 201, 201, 201, 401] },
  { route: 'GET /api/labs/:labId', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/labs/${c.lab.labId}`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'GET /api/labs/:unknownLab', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/labs/no-such-lab'), expect: [404, 404, 404, 404, 404, 401] },
  { route: 'PATCH /api/labs/:labId', send: (c) => call(c.t, c.lab.cookie(c.caller)).patch(`/api/labs/${c.lab.labId}`, { name: 'Renamed lab' }), expect: [200, 403, 403, 403, 404, 401] },
  { route: 'GET /api/labs/:labId/members', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/labs/${c.lab.labId}/members`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'PATCH /api/labs/:labId/members/:userId', send: (c) => call(c.t, c.lab.cookie(c.caller)).patch(`/api/labs/${c.lab.labId}/members/${c.lab.extra.id}`, { role: 'editor' }), expect: [200, 403, 403, 403, 404, 401] },
  { route: 'DELETE /api/labs/:labId/members/:userId (someone else)', send: (c) => call(c.t, c.lab.cookie(c.caller)).del(`/api/labs/${c.lab.labId}/members/${c.lab.extra.id}`), expect: [204, 403, 403, 403, 404, 401] },
  // leaving: the sole owner may not (a lab keeps an owner)
  { route: 'DELETE /api/labs/:labId/members/:userId (leave)', send: (c) => call(c.t, c.lab.cookie(c.caller)).del(`/api/labs/${c.lab.labId}/members/${self(c)}`), expect: [409, 204, 204, 204, 404, 401] },
  { route: 'GET /api/labs/:labId/invitations', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/labs/${c.lab.labId}/invitations`), expect: [200, 403, 403, 403, 404, 401] },
  { route: 'POST /api/labs/:labId/invitations', send: (c) => call(c.t, c.lab.cookie(c.caller)).post(`/api/labs/${c.lab.labId}/invitations`, { email: 'postdoc@elsewhere.example', role: 'editor' }), expect: [201, 403, 403, 403, 404, 401] },
  { route: 'DELETE /api/labs/:labId/invitations/:invitationId', send: (c) => call(c.t, c.lab.cookie(c.caller)).del(`/api/labs/${c.lab.labId}/invitations/${c.invitationId}`), expect: [204, 403, 403, 403, 404, 401] },
  { route: 'GET /api/invitations/:token', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/invitations/${c.invitationToken}`), expect: [200, 200, 200, 200, 200, 200] },
  // members' accounts are not the invited address (refused); the outsider, invited, joins with their account;
  // anonymous creates the invited address's account
  { route: 'POST /api/invitations/:token/accept', send: (c) => call(c.t, c.lab.cookie(c.caller)).post(`/api/invitations/${c.invitationToken}/accept`, { name: 'Invited Person', password: 'invited person password' }), expect: [403, 403, 403, 403, 200, 200] },
  { route: 'GET /api/labs/:labId/sheets', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/labs/${c.lab.labId}/sheets`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'POST /api/labs/:labId/sheets {title}', send: (c) => call(c.t, c.lab.cookie(c.caller)).post(`/api/labs/${c.lab.labId}/sheets`, { title: 'New sheet' }), expect: [201, 201, 403, 403, 404, 401] },
  { route: 'POST /api/labs/:labId/sheets <sheet file>', send: (c) => call(c.t, c.lab.cookie(c.caller)).post(`/api/labs/${c.lab.labId}/sheets`, SHEET_FILE), expect: [201, 201, 403, 403, 404, 401] },
  { route: 'GET /api/sheets/:sheetId', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/sheets/${c.lab.editorSheetId}`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'GET /api/sheets/:unknownSheet', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/sheets/no-such-sheet'), expect: [404, 404, 404, 404, 404, 401] },
  { route: 'PATCH /api/sheets/:sheetId', send: (c) => call(c.t, c.lab.cookie(c.caller)).patch(`/api/sheets/${c.lab.editorSheetId}`, { title: 'Renamed sheet' }), expect: [200, 200, 403, 403, 404, 401] },
  { route: 'DELETE /api/sheets/:sheetId (made by the editor)', send: (c) => call(c.t, c.lab.cookie(c.caller)).del(`/api/sheets/${c.lab.editorSheetId}`), expect: [204, 204, 403, 403, 404, 401] },
  { route: 'DELETE /api/sheets/:sheetId (made by the owner)', send: (c) => call(c.t, c.lab.cookie(c.caller)).del(`/api/sheets/${c.lab.ownerSheetId}`), expect: [204, 403, 403, 403, 404, 401] },
  { route: 'GET /api/sheets/:sheetId/file', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/sheets/${c.lab.editorSheetId}/file`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'POST /api/sheets/:sheetId/datasets/preview', send: (c) => upload(c, `/api/sheets/${c.lab.editorSheetId}/datasets/preview`), expect: [200, 200, 403, 403, 404, 401] },
  { route: 'POST /api/sheets/:sheetId/datasets', send: (c) => upload(c, `/api/sheets/${c.lab.editorSheetId}/datasets`), expect: [201, 201, 403, 403, 404, 401] },
  { route: 'GET /api/datasets/:datasetId', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/datasets/${c.datasetId}`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'GET /api/datasets/:unknownDataset', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/datasets/no-such-dataset'), expect: [404, 404, 404, 404, 404, 401] },
  { route: 'GET /api/sheets/:sheetId/cells/:cellId/csv', send: (c) => call(c.t, c.lab.cookie(c.caller)).get(`/api/sheets/${c.csvSheetId}/cells/${c.csvCellId}/csv`), expect: [200, 200, 200, 200, 404, 401] },
  { route: 'POST /api/evaluate', send: (c) => call(c.t, c.lab.cookie(c.caller)).post('/api/evaluate', SHEET_FILE), expect: [200, 200, 200, 200, 200, 401] },
  { route: 'GET /dev/mail.json', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/dev/mail.json'), expect: [200, 200, 200, 200, 200, 200] },
]

async function context(caller: Caller): Promise<Ctx> {
  const t = await makeTestApp()
  const lab = await seedLab(t)
  await requestReset(t.deps, lab.users.viewer.email)
  const resetToken = t.mailer.tokenFor(lab.users.viewer.email, '/reset/')
  await requestSignUp(t.deps, { email: 'pending@elsewhere.example', name: 'Pending Person', password: 'pending person password' })
  const confirmToken = t.mailer.tokenFor('pending@elsewhere.example', '/confirm/')
  // the outsider is invited (so accepting as them joins); anonymous accepts by creating that address's account
  const invitedEmail = caller === 'anonymous' ? 'brand-new@elsewhere.example' : caller === 'outsider' ? lab.users.outsider.email : 'member-invited@elsewhere.example'
  const invitation = await createInvitation(t.deps, (await labById(t.deps, lab.labId))!, lab.users.owner, invitedEmail, 'viewer')
  const invitationToken = t.mailer.tokenFor(invitedEmail, '/invitations/')
  const datasetId = await storeDataset(t.db, {
    labId: lab.labId, sheetId: lab.editorSheetId, name: 'filmB', uploadedBy: lab.users.editor.id,
    columns: [{ name: 'wavelength', quantity: 'wavelength', unit: 'nm', values: [400, 410] }, { name: 'T', quantity: 'T', unit: '%', values: [80, 81] }],
  })
  const csvSheet = await createSheet(t.deps, lab.labId, lab.users.editor.id, {
    format: 'penumbra.sheet', version: 1, title: 'Film B',
    cells: [{ kind: 'spectrum', name: 'filmB', columns: { wavelength: { unit: 'nm', values: [400, 410] }, T: { unit: '%', values: [80, 81] } } }],
  })
  const csvCellId = (await loadSheetFile(t.db, csvSheet.id)).cells[0].id
  return { t, lab, caller, resetToken, confirmToken, invitationToken, invitationId: invitation.id, datasetId, csvSheetId: csvSheet.id, csvCellId }
}

describe('role matrix', () => {
  for (const row of ROUTES) {
    describe(row.route, () => {
      CALLERS.forEach((caller, i) => {
        it(`answers ${row.expect[i]} for ${caller === 'outsider' ? 'a non-member' : caller === 'anonymous' ? 'an anonymous caller' : `the ${caller}`}`, async () => {
          const c = await context(caller)
          try {
            const res = await row.send(c)
            expect({ status: res.status, body: res.body }).toMatchObject({ status: row.expect[i] })
            if (res.status >= 400) expect(typeof (res.body as { error?: unknown }).error).toBe('string')
          } finally {
            await c.t.close()
          }
        })
      })
    })
  }
})

describe('GET /dev/mail.json', () => {
  it('answers 404 in production', async () => {
    const t = await makeTestApp({ config: { production: true } })
    const res = await call(t).get('/dev/mail.json')
    expect(res.status).toBe(404)
    expect(res.body.error).toMatch(/nothing at/)
    await t.close()
  })
})

// ---------------------------------------------------------------------------------------------------------------
// snapshots, reviews, comments and guest links: the six callers plus a guest holding a link's token (sent as a bearer
// header and a query parameter, which no member route accepts as a session)

type GuestCaller = Caller | 'guest'
const SNAPSHOT_CALLERS: readonly GuestCaller[] = [...CALLERS, 'guest']
type Expect7 = [...Expect, guest: number]

interface SnapCtx {
  t: TestApp
  lab: SeededLab
  caller: GuestCaller
  sheetId: string
  /** Frozen by the editor; reviewed (asking the reviewer and the owner), commented on, shared with a guest link. */
  a: string
  /** A later snapshot of the same sheet that nothing uses. */
  b: string
  reviewId: string
  commentId: string
  linkId: string
  token: string
  revokedToken: string
}

const MATRIX_SHEET = {
  ...SHEET_FILE,
  cells: [...SHEET_FILE.cells, { id: 'grid-E', kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 13)', unit: 'eV' }],
} as const

function as(c: SnapCtx) {
  if (c.caller !== 'guest') return call(c.t, c.lab.cookie(c.caller))
  const api = call(c.t)
  const withToken = (r: ReturnType<typeof api.get>) => r.set('Authorization', `Bearer ${c.token}`)
  const q = (p: string) => `${p}${p.includes('?') ? '&' : '?'}token=${encodeURIComponent(c.token)}`
  return {
    get: (p: string) => withToken(api.get(q(p))),
    post: (p: string, body?: object) => withToken(api.post(q(p), body)),
    patch: (p: string, body?: object) => withToken(api.patch(q(p), body)),
    del: (p: string) => withToken(api.del(q(p))),
  }
}

async function snapContext(caller: GuestCaller): Promise<SnapCtx> {
  const t = await makeTestApp()
  const lab = await seedLab(t)
  const sheet = await createSheet(t.deps, lab.labId, lab.users.editor.id, MATRIX_SHEET as never)
  const { sheet: row } = await sheetAccess(t.db, sheet.id, lab.users.editor.id)
  const a = await freezeSnapshot(t.deps, row!, lab.users.editor.id, 'first')
  const b = await freezeSnapshot(t.deps, row!, lab.users.editor.id, 'second')
  const review = await createReview(t.deps, a, lab.users.editor.id, [lab.users.reviewer.id, lab.users.owner.id], 'please look at the edge')
  const comment = await createComment(t.deps, row!, lab.users.reviewer.id, { cellId: 'grid-E', text: 'why 13 points?', snapshotId: a.id })
  const link = await createGuestLink(t.deps, a, lab.users.owner.id, { expiresInDays: 7, note: 'for the referee' })
  const revoked = await createGuestLink(t.deps, a, lab.users.owner.id, { expiresInDays: 7, note: 'old' })
  await revokeGuestLink(t.db, (await guestLinkById(t.db, revoked.id))!)
  const tokenOf = (url: string) => decodeURIComponent(new URL(url).pathname.split('/').pop()!)
  return { t, lab, caller, sheetId: sheet.id, a: a.id, b: b.id, reviewId: review.id, commentId: comment.id, linkId: link.id, token: tokenOf(link.url), revokedToken: tokenOf(revoked.url) }
}

type SnapSend = (c: SnapCtx) => PromiseLike<{ status: number; body: unknown }>
const MEMBERS_READ: Expect7 = [200, 200, 200, 200, 404, 401, 401]
const WRITERS_MAKE: Expect7 = [201, 201, 403, 403, 404, 401, 401]

const SNAPSHOT_ROUTES: { route: string; send: SnapSend; expect: Expect7 }[] = [
  { route: 'POST /api/sheets/:sheetId/snapshots', send: (c) => as(c).post(`/api/sheets/${c.sheetId}/snapshots`, { message: 'after the anneal' }), expect: WRITERS_MAKE },
  { route: 'GET /api/sheets/:sheetId/snapshots', send: (c) => as(c).get(`/api/sheets/${c.sheetId}/snapshots`), expect: MEMBERS_READ },
  { route: 'GET /api/snapshots/:snapshotId', send: (c) => as(c).get(`/api/snapshots/${c.a}`), expect: MEMBERS_READ },
  { route: 'GET /api/snapshots/:unknownSnapshot', send: (c) => as(c).get('/api/snapshots/no-such-snapshot'), expect: [404, 404, 404, 404, 404, 401, 401] },
  { route: 'DELETE /api/snapshots/:snapshotId (unused)', send: (c) => as(c).del(`/api/snapshots/${c.b}`), expect: [204, 403, 403, 403, 404, 401, 401] },
  { route: 'DELETE /api/snapshots/:snapshotId (reviewed, shared)', send: (c) => as(c).del(`/api/snapshots/${c.a}`), expect: [409, 403, 403, 403, 404, 401, 401] },
  { route: 'GET /api/snapshots/:snapshotId/file', send: (c) => as(c).get(`/api/snapshots/${c.a}/file`), expect: MEMBERS_READ },
  { route: 'GET /api/snapshots/:snapshotId/cells/:cellId/csv', send: (c) => as(c).get(`/api/snapshots/${c.a}/cells/grid-E/csv`), expect: MEMBERS_READ },
  { route: 'GET /api/snapshots/:a/compare/:b', send: (c) => as(c).get(`/api/snapshots/${c.a}/compare/${c.b}`), expect: MEMBERS_READ },
  { route: 'GET /api/snapshots/:a/compare/live', send: (c) => as(c).get(`/api/snapshots/${c.a}/compare/live`), expect: MEMBERS_READ },
  { route: 'POST /api/snapshots/:snapshotId/restore', send: (c) => as(c).post(`/api/snapshots/${c.a}/restore`, { into: 'new' }), expect: WRITERS_MAKE },
  { route: 'POST /api/snapshots/:snapshotId/reviews', send: (c) => as(c).post(`/api/snapshots/${c.b}/reviews`, { reviewerIds: [c.lab.users.reviewer.id], note: 'ready' }), expect: WRITERS_MAKE },
  { route: 'GET /api/snapshots/:snapshotId/reviews', send: (c) => as(c).get(`/api/snapshots/${c.a}/reviews`), expect: MEMBERS_READ },
  { route: 'GET /api/reviews/:reviewId', send: (c) => as(c).get(`/api/reviews/${c.reviewId}`), expect: MEMBERS_READ },
  { route: 'PATCH /api/reviews/:reviewId', send: (c) => as(c).patch(`/api/reviews/${c.reviewId}`, { decision: 'approved', note: 'fine' }), expect: [200, 403, 200, 403, 404, 401, 401] },
  { route: 'GET /api/labs/:labId/reviews', send: (c) => as(c).get(`/api/labs/${c.lab.labId}/reviews`), expect: MEMBERS_READ },
  { route: 'POST /api/sheets/:sheetId/comments', send: (c) => as(c).post(`/api/sheets/${c.sheetId}/comments`, { cellId: 'grid-E', text: 'a remark' }), expect: [201, 201, 201, 403, 404, 401, 401] },
  { route: 'GET /api/sheets/:sheetId/comments', send: (c) => as(c).get(`/api/sheets/${c.sheetId}/comments`), expect: MEMBERS_READ },
  { route: 'PATCH /api/comments/:commentId', send: (c) => as(c).patch(`/api/comments/${c.commentId}`, { resolved: true }), expect: [200, 200, 200, 403, 404, 401, 401] },
  { route: 'POST /api/snapshots/:snapshotId/guest-links', send: (c) => as(c).post(`/api/snapshots/${c.a}/guest-links`, { expiresInDays: 30, note: 'for a referee' }), expect: WRITERS_MAKE },
  { route: 'GET /api/snapshots/:snapshotId/guest-links', send: (c) => as(c).get(`/api/snapshots/${c.a}/guest-links`), expect: MEMBERS_READ },
  { route: 'DELETE /api/guest-links/:linkId', send: (c) => as(c).del(`/api/guest-links/${c.linkId}`), expect: [204, 204, 403, 403, 404, 401, 401] },
  { route: 'GET /api/guest/:token', send: (c) => as(c).get(`/api/guest/${encodeURIComponent(c.token)}`), expect: [200, 200, 200, 200, 200, 200, 200] },
  { route: 'GET /api/guest/:token/cells/:cellId/csv', send: (c) => as(c).get(`/api/guest/${encodeURIComponent(c.token)}/cells/grid-E/csv`), expect: [200, 200, 200, 200, 200, 200, 200] },
  { route: 'GET /api/guest/:revokedToken', send: (c) => as(c).get(`/api/guest/${encodeURIComponent(c.revokedToken)}`), expect: [410, 410, 410, 410, 410, 410, 410] },
  { route: 'GET /api/guest/:unknownToken', send: (c) => as(c).get('/api/guest/not-a-real-token-0123456789'), expect: [404, 404, 404, 404, 404, 404, 404] },
  { route: 'GET /api/guest/:revokedToken/cells/:cellId/csv', send: (c) => as(c).get(`/api/guest/${encodeURIComponent(c.revokedToken)}/cells/grid-E/csv`), expect: [410, 410, 410, 410, 410, 410, 410] },
  { route: 'GET /api/guest/:unknownToken/cells/:cellId/csv', send: (c) => as(c).get('/api/guest/not-a-real-token-0123456789/cells/grid-E/csv'), expect: [404, 404, 404, 404, 404, 404, 404] },
]

describe('role matrix: snapshots, reviews, comments, guest links', () => {
  for (const row of SNAPSHOT_ROUTES) {
    describe(row.route, () => {
      SNAPSHOT_CALLERS.forEach((caller, i) => {
        const who = caller === 'outsider' ? 'a non-member' : caller === 'anonymous' ? 'an anonymous caller' : caller === 'guest' ? 'a guest with a link token' : `the ${caller}`
        it(`answers ${row.expect[i]} for ${who}`, async () => {
          const c = await snapContext(caller)
          try {
            const res = await row.send(c)
            expect({ status: res.status, body: res.body }).toMatchObject({ status: row.expect[i] })
            if (res.status >= 400) expect(typeof (res.body as { error?: unknown }).error).toBe('string')
          } finally {
            await c.t.close()
          }
        })
      })
    })
  }
})
