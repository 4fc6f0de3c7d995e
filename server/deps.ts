/** What createApp is given: the database, the session secret, the mailer, the settings and the live-layer hooks. */
import type { Db } from './db/client'
import type { AppConfig } from './config'
import type { Mailer } from './mail/mailer'
import type { Evaluator } from './services/evaluation'
import type { RateLimitStores } from './middleware/rateLimits'

/** Called after the change is stored, so the live collaboration layer can disconnect or downgrade people. */
export interface AppHooks {
  membershipChanged?(labId: string, userId: string): void
  sheetDeleted?(sheetId: string): void
  /** Some of the person's sessions ended (signed out, password changed or reset): their open websockets are checked now. */
  sessionsEnded?(userId: string): void
}

export interface AppDeps {
  db: Db
  secret: Uint8Array
  mailer: Mailer
  config: AppConfig
  hooks?: AppHooks
  /** Where the rate limits count (default: in this process's memory; several instances share Redis). */
  rateLimitStores?: RateLimitStores
  /** The server's evaluator for freezing and comparing (default: the process's shared worker pool). */
  evaluator?: Evaluator
}

/** Calls a hook without letting its failure undo or fail the request that triggered it. */
export function callHook<K extends keyof AppHooks>(deps: AppDeps, name: K, ...args: Parameters<NonNullable<AppHooks[K]>>): void {
  const hook = deps.hooks?.[name] as ((...a: unknown[]) => void) | undefined
  if (!hook) return
  try {
    hook.apply(deps.hooks, args)
  } catch (err) {
    console.warn(`hook ${name} failed: ${err instanceof Error ? err.message : String(err)}`)
  }
}
