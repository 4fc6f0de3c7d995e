/** The app's settings: everything createApp needs besides the db, the secret and the mailer. */

export interface RateLimitConfig {
  windowMs: number
  /** Requests per window and client address. */
  limit: number
}

export interface AppConfig {
  /** Base URL for links in mails, without a trailing slash (never taken from the request's Host header). */
  publicUrl: string
  /** NODE_ENV === 'production': no developer mailbox, secure cookies when the public URL is https. */
  production: boolean
  /** Folder of the built client (dist/) to serve with a fallback to index.html, or null to serve only the API. */
  clientDir: string | null
  /** Mark the session cookie Secure on every response (it is Secure anyway on a request that came over https). */
  cookieSecure: boolean
  /** Express 'trust proxy' setting, for rate limits by client address behind a reverse proxy. */
  trustProxy: boolean | number | string
  limits: {
    /** Failed sign-ins (successful ones do not count). */
    signIn: RateLimitConfig
    /** Requests that send mail: sign-up and reset requests. */
    mail: RateLimitConfig
    /** Failed password resets and sign-up confirmations (wrong or stale tokens). */
    token: RateLimitConfig
  }
  ttl: {
    invitationMs: number
    resetMs: number
    signupMs: number
    sessionSeconds: number
  }
  /** Largest JSON body or uploaded file, bytes. */
  maxBodyBytes: number
  /**
   * POST /api/evaluate: the largest sheet file it takes and the largest result it sends, bytes, and the wall-clock
   * budget for the whole sheet, ms.
   */
  evaluate: { maxBytes: number; maxResultBytes: number; budgetMs: number }
  /** Sender of outgoing mail. */
  mailFrom: string
  /** argon2id cost (OWASP's minimum recommendation by default: 19 MiB, 2 passes). */
  argon2: { memoryCost: number; timeCost: number }
}

const MINUTE = 60_000
const DAY = 24 * 60 * MINUTE

export function defaultConfig(overrides: Partial<AppConfig> = {}): AppConfig {
  return {
    publicUrl: 'http://localhost:3000',
    production: false,
    clientDir: null,
    cookieSecure: false,
    trustProxy: false,
    limits: {
      signIn: { windowMs: 15 * MINUTE, limit: 10 },
      mail: { windowMs: 15 * MINUTE, limit: 10 },
      token: { windowMs: 15 * MINUTE, limit: 10 },
    },
    ttl: { invitationMs: 7 * DAY, resetMs: 60 * MINUTE, signupMs: DAY, sessionSeconds: 7 * 24 * 3600 },
    maxBodyBytes: 10 * 1024 * 1024,
    evaluate: { maxBytes: 5 * 1024 * 1024, maxResultBytes: 64 * 1024 * 1024, budgetMs: 10_000 },
    mailFrom: 'Penumbra <no-reply@penumbra.localhost>',
    argon2: { memoryCost: 19456, timeCost: 2 },
    ...overrides,
  }
}
