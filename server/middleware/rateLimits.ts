/** Rate limits on sign-in, mail-sending and token routes (express-rate-limit, per client address). */
import { rateLimit } from 'express-rate-limit'
import type { RateLimitConfig } from '../config'

export function limiter(config: RateLimitConfig, what: string, options: { onlyFailures?: boolean } = {}) {
  return rateLimit({
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
