/** The session-signing secret (its own module: `npm run seed` reads it without loading the whole server). */
import path from 'node:path'
import { existsSync, readFileSync, writeFileSync } from 'node:fs'
import { randomBytes } from 'node:crypto'

/** PENUMBRA_SECRET, or a random secret generated once and kept in DATA_DIR/session-secret. */
export function loadSecret(dataDir: string, fromEnv: string | undefined, warn: (m: string) => void): Uint8Array {
  if (fromEnv) {
    if (fromEnv.length < 32) warn('PENUMBRA_SECRET is shorter than 32 characters; use a long random value.')
    return new TextEncoder().encode(fromEnv)
  }
  const file = path.join(dataDir, 'session-secret')
  if (!existsSync(file)) writeFileSync(file, randomBytes(32).toString('base64url') + '\n', { mode: 0o600, flag: 'wx' })
  const text = readFileSync(file, 'utf8').trim()
  if (text.length < 32) throw new Error(`${file} holds a secret that is too short; delete it to generate a new one.`)
  return new TextEncoder().encode(text)
}
