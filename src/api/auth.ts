/** Accounts: sign-up and its mailed confirmation, sign-in and out, who am I, profile, password reset. */
import {
  meReply,
  messageReply,
  userReply,
  type ChangePasswordBody,
  type ResetBody,
  type SignInBody,
  type SignUpBody,
  type User,
} from '../../shared/schema/api'
import { api, ApiError, seg } from './client'

export type { User }

/** The signed-in user, or null when nobody is signed in (no session: 200 { user: null }; an ended one: 401). */
export async function me(): Promise<User | null> {
  try {
    return (await api.get('/api/auth/me', meReply, { quiet401: true })).user
  } catch (err) {
    if (err instanceof ApiError && err.status === 401) return null
    throw err
  }
}

export async function signIn(body: SignInBody): Promise<User> {
  return (await api.post('/api/auth/sign-in', body, userReply, { quiet401: true })).user
}

/** Always answers the same message; the account exists only once the mailed link is opened. */
export async function signUp(body: SignUpBody): Promise<string> {
  return (await api.post('/api/auth/sign-up', body, messageReply)).message
}

/** Opens the mailed confirmation link with the password chosen at sign-up: creates the account and signs it in. */
export async function confirmSignUp(token: string, password: string): Promise<User> {
  return (await api.post('/api/auth/confirm', { token, password }, userReply)).user
}

export async function signOut(): Promise<void> {
  await api.post('/api/auth/sign-out', {}, null, { quiet401: true })
}

export async function updateMe(name: string): Promise<User> {
  return (await api.patch('/api/auth/me', { name }, userReply)).user
}

export async function changePassword(body: ChangePasswordBody): Promise<void> {
  await api.post('/api/auth/password', body)
}

export async function requestReset(email: string): Promise<string> {
  return (await api.post('/api/auth/reset-request', { email }, messageReply, { quiet401: true })).message
}

export async function resetPassword(body: ResetBody): Promise<void> {
  await api.post('/api/auth/reset', body, null, { quiet401: true })
}

/** The link path a mailed token opens, for building in-app links. */
export function resetPath(token: string): string {
  return `/reset/${seg(token)}`
}
