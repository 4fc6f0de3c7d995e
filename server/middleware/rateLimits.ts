/**
 * Rate limits on sign-in, mail-sending and token routes (express-rate-limit, per client address). One instance counts
 * in memory; several instances (REDIS_URL) count together in Redis (rate-limit-redis), so a round-robin proxy does not
 * multiply the allowance. When Redis does not answer, requests pass (logged at most once a minute per limiter):
 * signing in keeps working through an outage.
 */
import { rateLimit, type Logger, type Store } from 'express-rate-limit'
import { RedisStore } from 'rate-limit-redis'
import type { Redis } from 'ioredis'
import type { RateLimitConfig } from '../config'

/** Makes the store of one named limiter (each limiter counts on its own). */
export type RateLimitStores = (name: string) => Store

/**
 * rate-limit-redis loads its scripts once, when the limiter is made: if Redis was away then, every later count would
 * fail for good. This store loads them again on the next request instead.
 */
class ReloadingRedisStore extends RedisStore {
  private async scriptsLoaded(): Promise<void> {
    try {
      await Promise.all([this.incrementScriptSha, this.getScriptSha])
    } catch {
      this.incrementScriptSha = this.loadIncrementScript()
      this.getScriptSha = this.loadGetScript()
      // a failure here fails this request's count (it passes) and is retried on the next one
      this.incrementScriptSha.catch(() => {})
      this.getScriptSha.catch(() => {})
    }
  }

  override async increment(key: string) {
    await this.scriptsLoaded()
    return super.increment(key)
  }

  override async get(key: string) {
    await this.scriptsLoaded()
    return super.get(key)
  }
}

/** Stores in Redis, one key prefix per limiter, on the given connection. */
export function redisRateLimitStores(client: Redis, prefix = 'penumbra:limit:'): RateLimitStores {
  return (name) =>
    new ReloadingRedisStore({
      sendCommand: (command: string, ...args: string[]) => client.call(command, ...args) as Promise<never>,
      prefix: `${prefix}${name}:`,
    })
}

/** Store failures (Redis away) are told once a minute per limiter, not once per request. */
function quietLogger(what: string): Logger {
  let lastTold = 0
  const tell = (error: unknown) => {
    if (Date.now() - lastTold < 60_000) return
    lastTold = Date.now()
    console.warn(`rate limit on ${what}: not counted, the store failed (${error instanceof Error ? error.message : String(error)}); requests pass meanwhile`)
  }
  return { error: tell, warn: tell }
}

export function limiter(config: RateLimitConfig, what: string, options: { onlyFailures?: boolean; store?: Store } = {}) {
  return rateLimit({
    store: options.store,
    passOnStoreError: true,
    logger: quietLogger(what),
    windowMs: config.windowMs,
    limit: config.limit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    skipSuccessfulRequests: options.onlyFailures ?? false,
    handler(req, res, _next, used) {
      const reset = (req as typeof req & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime
      const waitMs = reset ? reset.getTime() - Date.now() : used.windowMs
      const minutes = Math.max(1, Math.ceil(waitMs / 60_000))
      res.status(429).json({ error: `Too many ${what}. Wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.` })
    },
  })
}
