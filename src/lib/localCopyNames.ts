/**
 * Names and bookkeeping of the copies of sheets kept in this browser (IndexedDB), as pure functions so they can be
 * tested without a browser. One database per (signed-in user, sheet), named `penumbra:sheet:<user>:<sheet>`; every
 * database and cache Penumbra keeps in a browser starts with `penumbra:` so signing out can find and clear them all.
 *
 * A small register in localStorage remembers when each copy was last used (ms since 1970); copies unused for
 * LOCAL_COPY_MAX_AGE_MS are cleared at the next sign-in.
 */

/** Every IndexedDB database and Cache Storage cache of Penumbra starts with this. */
export const PENUMBRA_PREFIX = 'penumbra:'
const SHEET_PREFIX = `${PENUMBRA_PREFIX}sheet:`

/** The localStorage key of the register of local copies and when each was last used. */
export const LOCAL_COPY_REGISTER_KEY = 'penumbra:local-copies'

/** A local copy unused for this long (30 days) is cleared at the next sign-in. */
export const LOCAL_COPY_MAX_AGE_MS = 30 * 24 * 60 * 60 * 1000

/** When each local copy (by database name) was last used, in ms since 1970. */
export type LocalCopyRegister = Record<string, number>

/**
 * The database name of one user's copy of one sheet. Ids are percent-encoded so a `:` inside an id cannot make two
 * pairs share a name. Example: `localCopyName('u1', 's9')` → `'penumbra:sheet:u1:s9'`.
 */
export function localCopyName(userId: string, sheetId: string): string {
  if (!userId || !sheetId) throw new Error('a local copy needs both a user id and a sheet id')
  return `${SHEET_PREFIX}${encodeURIComponent(userId)}:${encodeURIComponent(sheetId)}`
}

/** The user and sheet of a local copy's database name, or null when the name is not one of ours. */
export function parseLocalCopyName(name: string): { userId: string; sheetId: string } | null {
  if (!name.startsWith(SHEET_PREFIX)) return null
  const parts = name.slice(SHEET_PREFIX.length).split(':')
  if (parts.length !== 2 || !parts[0] || !parts[1]) return null
  try {
    return { userId: decodeURIComponent(parts[0]), sheetId: decodeURIComponent(parts[1]) }
  } catch {
    return null
  }
}

/** True for every database or cache name Penumbra made (the ones signing out clears). */
export function isPenumbraName(name: string): boolean {
  return name.startsWith(PENUMBRA_PREFIX)
}

/** Reads the register from its stored text; anything unreadable counts as an empty register. */
export function parseRegister(text: string | null): LocalCopyRegister {
  if (!text) return {}
  try {
    const value: unknown = JSON.parse(text)
    if (!value || typeof value !== 'object' || Array.isArray(value)) return {}
    const out: LocalCopyRegister = {}
    for (const [name, at] of Object.entries(value as Record<string, unknown>))
      if (isPenumbraName(name) && typeof at === 'number' && Number.isFinite(at)) out[name] = at
    return out
  } catch {
    return {}
  }
}

/** The register with `name` marked as used at `now`. */
export function touchRegister(register: LocalCopyRegister, name: string, now: number): LocalCopyRegister {
  return { ...register, [name]: now }
}

/** The register without the given names. */
export function dropFromRegister(register: LocalCopyRegister, names: Iterable<string>): LocalCopyRegister {
  const out = { ...register }
  for (const name of names) delete out[name]
  return out
}

/**
 * Which local copies to clear at sign-in: those unused for longer than `maxAgeMs`. `present` lists the Penumbra
 * sheet databases the browser reports (or null when it cannot list them); a database missing from the register has
 * an unknown age, so it is registered as used now and its clock starts. Register entries whose database is gone are
 * dropped. Returns the names to delete and the register to store afterwards.
 */
export function planExpiry(
  present: readonly string[] | null,
  register: LocalCopyRegister,
  now: number,
  maxAgeMs: number = LOCAL_COPY_MAX_AGE_MS,
): { remove: string[]; register: LocalCopyRegister } {
  const names = new Set<string>(Object.keys(register))
  if (present) for (const n of present) if (parseLocalCopyName(n)) names.add(n)
  const remove: string[] = []
  const next: LocalCopyRegister = {}
  for (const name of [...names].sort()) {
    if (present && !present.includes(name)) continue // the database is gone already
    const used = register[name]
    if (used === undefined) next[name] = now
    else if (now - used > maxAgeMs) remove.push(name)
    else next[name] = used
  }
  return { remove, register: next }
}

/** Every Penumbra database to delete at sign-out: what the browser lists plus what the register knows. */
export function planSignOut(present: readonly string[] | null, register: LocalCopyRegister): string[] {
  const names = new Set<string>(Object.keys(register))
  if (present) for (const n of present) if (isPenumbraName(n)) names.add(n)
  return [...names].sort()
}
