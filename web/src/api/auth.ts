import { request } from './http'
import type { User } from './types'

export const authApi = {
  signIn(email: string, password: string): Promise<{ token: string; user: User }> {
    return request('/api/auth/sign-in', { method: 'POST', body: { email, password } })
  },
  me(): Promise<{ user: User }> {
    return request('/api/me')
  },
}
