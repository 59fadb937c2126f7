import { request } from './http'
import type { UnitSystem, User } from './types'

export interface RegisterInput {
  workspaceName: string
  displayName: string
  email: string
  password: string
  unitSystem: UnitSystem
}

export const authApi = {
  signIn(email: string, password: string): Promise<{ token: string; user: User }> {
    return request('/api/auth/sign-in', { method: 'POST', body: { email, password } })
  },
  /** A new workspace with its first member as admin, signed in at once. */
  register(input: RegisterInput): Promise<{ token: string; user: User }> {
    return request('/api/auth/register', { method: 'POST', body: input })
  },
  me(): Promise<{ user: User }> {
    return request('/api/me')
  },
}
