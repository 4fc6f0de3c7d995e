/** Who is signed in. Loaded once per page load; the router waits for it before guarding a route. */
import { computed, ref } from 'vue'
import { defineStore } from 'pinia'
import * as auth from '@/api/auth'
import type { User } from '@/api/auth'
import { forgetEverythingOnThisDevice, tidyLocalCopiesAtSignIn } from '@/lib/localCopyStore'

export const useSessionStore = defineStore('session', () => {
  const user = ref<User | null>(null)
  const loaded = ref(false)
  let pending: Promise<void> | null = null

  const signedIn = computed(() => user.value !== null)

  /** Asks the server who is signed in, once; later calls wait for the same answer. */
  function ensureLoaded(): Promise<void> {
    if (loaded.value) return Promise.resolve()
    if (!pending)
      pending = auth
        .me()
        .then((u) => {
          user.value = u
        })
        .catch(() => {
          // the server could not be reached: treat as signed out; the sign-in page will say what fails
          user.value = null
        })
        .finally(() => {
          loaded.value = true
          pending = null
        })
    return pending
  }

  async function signIn(email: string, password: string): Promise<User> {
    const u = await auth.signIn({ email, password })
    user.value = u
    loaded.value = true
    // sheet copies kept in this browser: drop those unused for 30 days (never blocks signing in)
    void tidyLocalCopiesAtSignIn(u.id).catch(() => undefined)
    return u
  }

  async function signOut(): Promise<void> {
    try {
      await auth.signOut()
    } finally {
      user.value = null
      // a shared lab computer: nothing of any sheet stays in this browser after signing out
      await forgetEverythingOnThisDevice().catch(() => undefined)
    }
  }

  /** Adopts a user the server just signed in (confirmation link, accepted invitation) or updated (profile). */
  function setUser(u: User | null): void {
    user.value = u
    loaded.value = true
    if (u) void tidyLocalCopiesAtSignIn(u.id).catch(() => undefined)
  }

  return { user, loaded, signedIn, ensureLoaded, signIn, signOut, setUser }
})
