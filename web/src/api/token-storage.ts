const KEY = 'crackpoint.token'

/** The access token lives in localStorage so a reload keeps the user signed in until it expires. */
export const tokenStorage = {
  get(): string | null {
    return localStorage.getItem(KEY)
  },
  set(token: string): void {
    localStorage.setItem(KEY, token)
  },
  clear(): void {
    localStorage.removeItem(KEY)
  },
}
