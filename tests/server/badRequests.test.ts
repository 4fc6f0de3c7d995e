// Every route, read from the app's router stack (so routes added later are covered without being listed here), meets
// the shapes of bad request an outside audit sends: broken JSON, a wrong content type, multipart with no boundary or
// cut short, a body past the size limit, and path segments that name built-in object properties. Each answers a 4xx
// (or a success where the route ignores the body) with a JSON `error` sentence — never a 500.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { CSRF_HEADER } from '../../shared/schema/api'
import { makeTestApp, seedLab, type SeededLab, type TestApp } from '../utils/server'
import { appRoutes, fillPath, type AppRoute } from '../utils/routes'

const MAX_BODY = 64 * 1024
const PROTOTYPE_WORDS = ['constructor', 'toString', '__proto__', 'hasOwnProperty', 'valueOf']

let t: TestApp
let lab: SeededLab
const routes: AppRoute[] = []

beforeAll(async () => {
  t = await makeTestApp({ config: { maxBodyBytes: MAX_BODY } })
  lab = await seedLab(t)
  routes.push(...appRoutes(t.app))
})
afterAll(() => t.close())

let labs = 0
/**
 * A lab of its own for each request: a request that signs out, changes the password or deletes the sheet must not
 * turn every later request into a 401 or 404 that never reaches the route.
 */
async function freshLab(): Promise<SeededLab> {
  lab = await seedLab(t, `Probe Lab ${++labs}`)
  return lab
}

/** Real ids for the route's parameters, so the request reaches the route's own handling. */
function realPath(route: AppRoute): string {
  return fillPath(route.path, (p) => (p === 'labId' ? lab.labId : p === 'sheetId' ? lab.ownerSheetId : p === 'userId' ? lab.extra.id : 'x'))
}

function send(route: AppRoute, path: string) {
  const agent = request(t.app)
  const method = route.method.toLowerCase() as 'get' | 'post' | 'patch' | 'put' | 'delete'
  return agent[method](path).set('Cookie', lab.users.owner.cookie).set(CSRF_HEADER, '1')
}

function expectClearRefusal(res: request.Response, what: string): void {
  expect(res.status, `${what}: ${res.status} ${JSON.stringify(res.body)}`).toBeLessThan(500)
  if (res.status >= 400) {
    expect(res.headers['content-type'], what).toMatch(/json/)
    expect(typeof res.body.error, what).toBe('string')
    expect(res.body.error.length, what).toBeGreaterThan(10)
  }
}

const boundary = '----penumbra-test-boundary'
const BODIES: [string, (r: request.Test) => request.Test][] = [
  ['broken JSON', (r) => r.set('Content-Type', 'application/json').send('{"name": "Lab",')],
  ['a wrong content type', (r) => r.set('Content-Type', 'application/xml').send('<lab name="x"/>')],
  ['multipart with no boundary', (r) => r.set('Content-Type', 'multipart/form-data').send('--x\r\nContent-Disposition: form-data; name="file"\r\n\r\nx')],
  [
    'truncated multipart',
    (r) =>
      r
        .set('Content-Type', `multipart/form-data; boundary=${boundary}`)
        .send(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="s.json"\r\nContent-Type: application/json\r\n\r\n{"format":`),
  ],
  ['a body past the size limit', (r) => r.set('Content-Type', 'application/json').send(`{"name":"${'x'.repeat(MAX_BODY + 10)}"}`)],
  ['a JSON array', (r) => r.set('Content-Type', 'application/json').send('[1,2,3]')],
  ['JSON null', (r) => r.set('Content-Type', 'application/json').send('null')],
]

describe('every route', () => {
  it('is found in the router stack (the walk sees the API, the invitations and the developer mailbox)', () => {
    const paths = routes.map((r) => `${r.method} ${r.path}`)
    expect(paths).toContain('GET /api/health')
    expect(paths).toContain('POST /api/labs/:labId/sheets')
    expect(paths).toContain('POST /api/invitations/:token/accept')
    expect(paths).toContain('GET /dev/fonts/:file')
    expect(routes.length).toBeGreaterThan(25)
  })

  it.each(BODIES)('answers %s with a 4xx and a sentence (or ignores it), never a 500', async (what, shape) => {
    for (const route of routes) {
      if (route.method === 'GET') continue
      await freshLab()
      expectClearRefusal(await shape(send(route, realPath(route))), `${what} to ${route.method} ${route.path}`)
    }
  })

  it('answers path segments that name built-in object properties with a 4xx, never a 500', async () => {
    for (const route of routes) {
      if (!route.path.includes(':')) continue
      for (const word of PROTOTYPE_WORDS) {
        await freshLab()
        const res = await send(route, fillPath(route.path, () => word)).set('Content-Type', 'application/json').send(route.method === 'GET' ? undefined : '{}')
        expectClearRefusal(res, `${route.method} ${route.path} with ${word}`)
        if (route.method === 'GET') expect(res.status, `${route.method} ${route.path} with ${word}`).toBeGreaterThanOrEqual(400)
      }
    }
  })
})

describe('the multipart upload of a sheet file', () => {
  it('POST /api/labs/:labId/sheets with no boundary answers 400 saying so', async () => {
    await freshLab()
    const res = await send({ method: 'POST', path: '' }, `/api/labs/${lab.labId}/sheets`).set('Content-Type', 'multipart/form-data').send('x')
    expect(res.status).toBe(400)
    expect(res.body.error).toMatch(/boundary/)
  })

  it('POST /api/labs/:labId/sheets cut short answers 400 saying the upload ended early', async () => {
    await freshLab()
    const res = await send({ method: 'POST', path: '' }, `/api/labs/${lab.labId}/sheets`)
      .set('Content-Type', `multipart/form-data; boundary=${boundary}`)
      .send(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="s.json"\r\n\r\n{"format":`)
    expect(res.status).toBe(400)
    expect(res.body.error).toMatch(/ended before it was complete/)
  })
})

describe('the developer fonts', () => {
  it.each(['constructor', 'toString', '__proto__', 'hasOwnProperty'])('GET /dev/fonts/%s answers 404', async (word) => {
    const res = await request(t.app).get(`/dev/fonts/${word}`)
    expect(res.status).toBe(404)
    expect(res.body.error).toMatch(/nothing at GET/)
  })

  it('GET /dev/fonts/fira-sans-400.woff2 still serves the font', async () => {
    const res = await request(t.app).get('/dev/fonts/fira-sans-400.woff2')
    expect(res.status).toBe(200)
  })
})
