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

/** A small instrument export (invented values) for the upload routes. */
const CSV = 'Wavelength (nm),%T\n400,80\n410,81\n420,82\n'
const upload = (c: Ctx, path: string) => call(c.t, c.lab.cookie(c.caller)).post(path).attach('file', Buffer.from(CSV), 'filmB.csv')

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
  { route: 'GET /api/auth/me', send: (c) => call(c.t, c.lab.cookie(c.caller)).get('/api/auth/me'), expect: [200, 200, 200, 200, 200, 401] },
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
  // members are already in; the outsider joins with their account; anonymous creates the invited address's account
  { route: 'POST /api/invitations/:token/accept', send: (c) => call(c.t, c.lab.cookie(c.caller)).post(`/api/invitations/${c.invitationToken}/accept`, { name: 'Invited Person', password: 'invited person password' }), expect: [409, 409, 409, 409, 200, 200] },
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
  const t = makeTestApp()
  const lab = await seedLab(t)
  requestReset(t.deps, lab.users.viewer.email)
  const resetToken = t.mailer.tokenFor(lab.users.viewer.email, '/reset/')
  await requestSignUp(t.deps, { email: 'pending@elsewhere.example', name: 'Pending Person', password: 'pending person password' })
  const confirmToken = t.mailer.tokenFor('pending@elsewhere.example', '/confirm/')
  // the outsider is invited (so accepting as them joins); anonymous accepts by creating that address's account
  const invitedEmail = caller === 'anonymous' ? 'brand-new@elsewhere.example' : caller === 'outsider' ? lab.users.outsider.email : 'member-invited@elsewhere.example'
  const invitation = createInvitation(t.deps, labById(t.deps, lab.labId)!, lab.users.owner, invitedEmail, 'viewer')
  const invitationToken = t.mailer.tokenFor(invitedEmail, '/invitations/')
  const datasetId = storeDataset(t.db, {
    labId: lab.labId, sheetId: lab.editorSheetId, name: 'filmB', uploadedBy: lab.users.editor.id,
    columns: [{ name: 'wavelength', quantity: 'wavelength', unit: 'nm', values: [400, 410] }, { name: 'T', quantity: 'T', unit: '%', values: [80, 81] }],
  })
  const csvSheet = createSheet(t.deps, lab.labId, lab.users.editor.id, {
    format: 'penumbra.sheet', version: 1, title: 'Film B',
    cells: [{ kind: 'spectrum', name: 'filmB', columns: { wavelength: { unit: 'nm', values: [400, 410] }, T: { unit: '%', values: [80, 81] } } }],
  })
  const csvCellId = loadSheetFile(t.db, csvSheet.id).cells[0].id
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
            c.t.close()
          }
        })
      })
    })
  }
})

describe('GET /dev/mail.json', () => {
  it('answers 404 in production', async () => {
    const t = makeTestApp({ config: { production: true } })
    const res = await call(t).get('/dev/mail.json')
    expect(res.status).toBe(404)
    expect(res.body.error).toMatch(/nothing at/)
    t.close()
  })
})
