/**
 * Which database this process uses, decided once from DATABASE_URL: unset or empty → the embedded SQLite under
 * DATA_DIR (the default); `postgres://…` or `postgresql://…` → PostgreSQL (the scale-out configuration).
 */
export type Dialect = 'sqlite' | 'pg'

export function dialectFromUrl(url: string | undefined): Dialect {
  const value = (url ?? '').trim()
  if (!value) return 'sqlite'
  if (/^postgres(ql)?:\/\//i.test(value)) return 'pg'
  throw new Error(`DATABASE_URL must be a PostgreSQL address (postgres://user@host:port/database) or unset for SQLite; got "${value.split(':')[0]}:…"`)
}

/** The process's dialect; a DATABASE_URL naming another database stops the process with the reason. */
export const DIALECT: Dialect = (() => {
  try {
    return dialectFromUrl(globalThis.process?.env?.DATABASE_URL)
  } catch (err) {
    console.error(`Penumbra could not start: ${(err as Error).message}`)
    process.exit(1)
  }
})()
