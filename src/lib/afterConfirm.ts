/** Where to go once a new account is confirmed from its mailed link (kept across the trip to the mailbox). */
const KEY = 'penumbra.afterConfirm'

export function rememberAfterConfirm(path: string | null): void {
  try {
    if (path) localStorage.setItem(KEY, path)
    else localStorage.removeItem(KEY)
  } catch {
    // storage unavailable: the confirmed person lands on their labs
  }
}

export function takeAfterConfirm(): string | null {
  try {
    const path = localStorage.getItem(KEY)
    localStorage.removeItem(KEY)
    return path
  } catch {
    return null
  }
}
