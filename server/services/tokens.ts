/** Random tokens for mailed links. Only their SHA-256 is stored, so a leaked database holds no usable link. */
import { createHash, randomBytes, randomUUID } from 'node:crypto'

export function newId(): string {
  return randomUUID()
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex')
}

/** 32 random bytes, base64url (43 characters), and its hash. */
export function newToken(): { token: string; hash: string } {
  const token = randomBytes(32).toString('base64url')
  return { token, hash: hashToken(token) }
}
