/** Password hashing with argon2id (@node-rs/argon2). */
import { hash, verify, type Algorithm } from '@node-rs/argon2'
import type { AppConfig } from '../config'

const ARGON2ID = 2 as Algorithm

export function hashPassword(config: Pick<AppConfig, 'argon2'>, password: string): Promise<string> {
  return hash(password, { algorithm: ARGON2ID, memoryCost: config.argon2.memoryCost, timeCost: config.argon2.timeCost, parallelism: 1 })
}

export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
  try {
    return await verify(passwordHash, password)
  } catch {
    return false
  }
}

let dummy: Promise<string> | null = null
/**
 * Spends the same work as checking a real password, for an address with no account, so the time of the answer
 * does not tell whether the account exists.
 */
export async function verifyAgainstDummy(config: Pick<AppConfig, 'argon2'>, password: string): Promise<false> {
  dummy ??= hashPassword(config, 'penumbra-dummy-password-for-even-timing')
  await verifyPassword(await dummy, password)
  return false
}
