/**
 * Housekeeping of the sheet copies kept in this browser, without loading Yjs (the session store calls it at sign-in
 * and sign-out): the register of when each copy was last used, deleting databases, clearing the offline page's kept
 * answers, and registering the offline page keeper (public/penumbra-offline.js). Rules are in localCopyNames.ts.
 *
 * Sign-in and sign-out housekeeping run one after the other; opening a copy waits for them (`afterHousekeeping`), so
 * a copy is never deleted while a sheet page is opening it.
 */
import * as idb from 'lib0/indexeddb'
import {
  LOCAL_COPY_REGISTER_KEY,
  PENUMBRA_PREFIX,
  dropFromRegister,
  isPenumbraName,
  parseLocalCopyName,
  parseRegister,
  planExpiry,
  planSignOut,
  touchRegister,
  type LocalCopyRegister,
} from './localCopyNames'

/** The Cache Storage cache of the offline page keeper's remembered answers (who is signed in, sheet metadata). */
export const ANSWERS_CACHE = `${PENUMBRA_PREFIX}answers`
/** The localStorage key of the last user who signed in on this browser. */
const LAST_USER_KEY = 'penumbra:last-user'
/** The service worker that keeps the app's page available while the server is away. */
const SERVICE_WORKER_URL = '/penumbra-offline.js'

let housekeeping: Promise<void> = Promise.resolve()

/** Runs `job` after the housekeeping already queued; errors are logged, never thrown to the caller. */
function queue(job: () => Promise<void>): Promise<void> {
  housekeeping = housekeeping.then(job).catch((err: unknown) => console.warn('Penumbra could not tidy the sheet copies in this browser:', err))
  return housekeeping
}

/** Resolves when queued sign-in or sign-out housekeeping is done. */
export function afterHousekeeping(): Promise<void> {
  return housekeeping
}

/** Marks a copy as used now (for the 30-day rule). */
export function markUsed(name: string, now = Date.now()): void {
  writeRegister(touchRegister(readRegister(), name, now))
}

/** Deletes one copy and forgets it in the register. */
export async function deleteCopy(name: string): Promise<void> {
  await deleteDatabase(name)
  writeRegister(dropFromRegister(readRegister(), [name]))
}

function readRegister(): LocalCopyRegister {
  try {
    return parseRegister(localStorage.getItem(LOCAL_COPY_REGISTER_KEY))
  } catch {
    return {}
  }
}

function writeRegister(register: LocalCopyRegister): void {
  try {
    if (Object.keys(register).length === 0) localStorage.removeItem(LOCAL_COPY_REGISTER_KEY)
    else localStorage.setItem(LOCAL_COPY_REGISTER_KEY, JSON.stringify(register))
  } catch {
    // storage refused (private mode, quota): the register is a convenience; sign-out still lists the databases
  }
}

/** The database names the browser reports, or null when it cannot list them. */
async function listDatabases(): Promise<string[] | null> {
  if (typeof indexedDB === 'undefined' || typeof indexedDB.databases !== 'function') return null
  try {
    return (await indexedDB.databases()).map((d) => d.name ?? '').filter((n) => n !== '')
  } catch {
    return null
  }
}

/** Deletes one database; resolves when it is gone (or could not be deleted, which is logged). */
export async function deleteDatabase(name: string): Promise<void> {
  if (typeof indexedDB === 'undefined') return
  try {
    await idb.deleteDB(name)
  } catch (err) {
    console.warn(`Penumbra could not delete the local copy ${name}:`, err)
  }
}

async function clearAnswers(): Promise<void> {
  if (typeof caches === 'undefined') return
  try {
    await caches.delete(ANSWERS_CACHE)
  } catch {
    // no Cache Storage here (plain http on another host): nothing was kept
  }
}

/** Drops the offline page keeper's remembered metadata of one sheet (deleted, or access ended). */
export async function forgetSheetAnswer(sheetId: string): Promise<void> {
  if (typeof caches === 'undefined') return
  try {
    await (await caches.open(ANSWERS_CACHE)).delete(`/api/sheets/${encodeURIComponent(sheetId)}`)
  } catch {
    // nothing was kept
  }
}

/**
 * Sign-out on a shared computer: deletes every Penumbra database in this browser (all users' sheet copies) and the
 * remembered answers of the offline page. Edits still waiting in a copy are lost with it.
 */
export function forgetEverythingOnThisDevice(): Promise<void> {
  return queue(async () => {
    const names = planSignOut(await listDatabases(), readRegister())
    await Promise.all(names.map(deleteDatabase))
    writeRegister({})
    await clearAnswers()
    try {
      localStorage.removeItem(LAST_USER_KEY)
    } catch {
      // nothing stored
    }
  })
}

/**
 * At sign-in: clears copies unused for 30 days, and when someone else than the last person signs in on this browser,
 * the remembered answers (who was signed in, sheet titles), so nothing of theirs shows while offline. Other people's
 * sheet copies stay under their own names, unreachable from this account, until they expire or someone signs out.
 */
export function tidyLocalCopiesAtSignIn(userId: string, now = Date.now()): Promise<void> {
  return queue(async () => {
    const present = await listDatabases()
    const plan = planExpiry(present ? present.filter((n) => parseLocalCopyName(n) !== null) : null, readRegister(), now)
    await Promise.all(plan.remove.map(deleteDatabase))
    writeRegister(plan.register)
    let last: string | null
    try {
      last = localStorage.getItem(LAST_USER_KEY)
      localStorage.setItem(LAST_USER_KEY, userId)
    } catch {
      last = null
    }
    if (last !== userId) await clearAnswers()
  })
}

/** The names of this browser's Penumbra databases (for checks and tests). */
export async function penumbraDatabases(): Promise<string[]> {
  return ((await listDatabases()) ?? Object.keys(readRegister())).filter(isPenumbraName).sort()
}

/**
 * Registers the service worker that keeps the app's page and scripts in this browser, so a reload while the server is
 * away still opens the sheet from its local copy. The scripts this page already loaded, and the answers it needs
 * again offline (who is signed in, plus `answers`, e.g. `/api/sheets/<id>`), are handed to it at once.
 */
export function keepPageForOffline(answers: readonly string[] = []): void {
  if (typeof navigator === 'undefined' || !('serviceWorker' in navigator) || !window.isSecureContext) return
  navigator.serviceWorker
    .register(SERVICE_WORKER_URL, { scope: '/' })
    .then(() => navigator.serviceWorker.ready)
    .then((registration) => {
      const origin = window.location.origin
      const urls = performance
        .getEntriesByType('resource')
        .map((e) => e.name)
        .filter((u) => u.startsWith(`${origin}/assets/`))
      registration.active?.postMessage({ type: 'penumbra-keep', urls: ['/', ...new Set(urls)], answers: ['/api/auth/me', ...answers] })
    })
    .catch((err: unknown) => console.warn('Penumbra could not keep its page for offline use:', err))
}
