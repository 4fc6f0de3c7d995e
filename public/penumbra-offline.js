/**
 * Penumbra's offline page keeper (a service worker, registered by the sheet page through src/lib/localCopy.ts).
 *
 * It only helps while the server cannot be reached; whenever the server answers, its answer is used:
 * - pages: the server's page, else the last page kept (the app is one page; the router picks the view);
 * - /assets/… (hashed, never change): kept the first time they are fetched, then served from here;
 * - GET /api/auth/me and GET /api/sheets/<id>: the server's answer, else the last successful answer kept, so a sheet
 *   page reloaded while the server is away knows who is signed in and which sheet it is, and opens the sheet from the
 *   copy kept in the browser. A 401, 403 or 404 from the server drops the kept answer, and so does "nobody is signed
 *   in" (GET /api/auth/me → 200 { user: null }): only a signed-in answer is kept.
 * Nothing else is touched: edits travel over the websocket, other API calls fail as usual when the server is away.
 * Signing out deletes the kept answers (cache `penumbra:answers`); the page cache holds no personal data (a page the
 * server marks no-store, such as a sheet's page with its first view, is never kept).
 */
const PAGE_CACHE = 'penumbra:page'
const ANSWERS_CACHE = 'penumbra:answers'
const PAGE_KEY = '/'
const REMEMBERED = /^\/api\/(auth\/me|sheets\/[^/]+)$/
/** Addresses that are never the app's page (downloads, the developer mailbox, the websocket). */
const NOT_PAGES = /^\/(api|dev|collab)(\/|$)/

self.addEventListener('install', () => {
  self.skipWaiting()
})

self.addEventListener('activate', (event) => {
  event.waitUntil(self.clients.claim())
})

/** The page asks to keep the scripts and answers it already loaded before this worker was running. */
self.addEventListener('message', (event) => {
  const data = event.data
  if (!data || data.type !== 'penumbra-keep' || !Array.isArray(data.urls)) return
  event.waitUntil(
    (async () => {
      const cache = await caches.open(PAGE_CACHE)
      for (const raw of data.urls) {
        if (typeof raw !== 'string') continue
        const url = new URL(raw, self.location.origin)
        if (url.origin !== self.location.origin) continue
        const key = url.pathname === '/' ? PAGE_KEY : url.pathname
        if (key !== PAGE_KEY && !key.startsWith('/assets/')) continue
        if (key !== PAGE_KEY && (await cache.match(key))) continue
        try {
          const res = await fetch(key === PAGE_KEY ? new Request('/', { headers: { Accept: 'text/html' } }) : key)
          if (res.ok) await cache.put(key, res)
        } catch {
          // the server went away meanwhile: kept next time
        }
      }
      const answers = await caches.open(ANSWERS_CACHE)
      for (const path of Array.isArray(data.answers) ? data.answers : []) {
        if (typeof path !== 'string' || !REMEMBERED.test(path)) continue
        try {
          const res = await fetch(path, { credentials: 'same-origin', headers: { Accept: 'application/json' } })
          await remember(answers, path, res)
        } catch {
          // kept the next time the page asks
        }
      }
    })(),
  )
})

/**
 * Keeps a successful answer (a copy: `res` stays readable), except "nobody is signed in", which drops the kept one as
 * a 401, 403 or 404 does; any other failure leaves the kept answer alone.
 */
async function remember(cache, path, res) {
  let keep = res.ok
  if (keep && path === '/api/auth/me') {
    try {
      const body = await res.clone().json()
      keep = !!(body && body.user)
    } catch {
      keep = false
    }
  }
  if (keep) await cache.put(path, res.clone())
  else if (res.ok || res.status === 401 || res.status === 403 || res.status === 404) await cache.delete(path)
}

async function page(request) {
  const cache = await caches.open(PAGE_CACHE)
  try {
    const res = await fetch(request)
    // a sheet's page with its first view (server/preview.ts) holds that sheet's cells and comes marked no-store:
    // only the plain page is kept
    const personal = /no-store/.test(res.headers.get('Cache-Control') || '')
    if (res.ok && !personal && (res.headers.get('Content-Type') || '').includes('text/html')) await cache.put(PAGE_KEY, res.clone())
    return res
  } catch (err) {
    const kept = await cache.match(PAGE_KEY)
    if (kept) return kept
    throw err
  }
}

async function asset(request, path) {
  const cache = await caches.open(PAGE_CACHE)
  const kept = await cache.match(path)
  if (kept) return kept
  const res = await fetch(request)
  if (res.ok) await cache.put(path, res.clone())
  return res
}

async function answer(request, path) {
  const cache = await caches.open(ANSWERS_CACHE)
  try {
    const res = await fetch(request)
    await remember(cache, path, res)
    return res
  } catch (err) {
    const kept = await cache.match(path)
    if (kept) return kept
    throw err
  }
}

self.addEventListener('fetch', (event) => {
  const request = event.request
  if (request.method !== 'GET') return
  const url = new URL(request.url)
  if (url.origin !== self.location.origin) return
  if (request.mode === 'navigate') {
    if (!NOT_PAGES.test(url.pathname)) event.respondWith(page(request))
  } else if (url.pathname.startsWith('/assets/')) event.respondWith(asset(request, url.pathname))
  else if (REMEMBERED.test(url.pathname)) event.respondWith(answer(request, url.pathname))
})
