import { request } from './http'
import type { Role, User } from './types'

export type InvitationStatus = 'open' | 'accepted' | 'revoked' | 'expired'

export interface Invitation {
  id: string
  email: string
  role: Role
  status: InvitationStatus
  invitedBy: string | null
  createdAt: string
  expiresAt: string
  acceptedAt: string | null
  revokedAt: string | null
}

export interface InvitationPreview {
  workspaceName: string
  email: string
  role: Role
  expiresAt: string
}

export interface Member {
  id: string
  email: string
  displayName: string
  role: Role
  createdAt: string
}

const enc = encodeURIComponent

/** Members, roles and invitations (admins), and the public side of an invitation link. */
export const teamApi = {
  members(): Promise<{ items: Member[] }> {
    return request('/api/members')
  },
  setRole(id: string, role: Role): Promise<{ member: Member }> {
    return request(`/api/members/${enc(id)}`, { method: 'PATCH', body: { role } })
  },
  invitations(): Promise<{ items: Invitation[] }> {
    return request('/api/invitations')
  },
  invite(email: string, role: Role): Promise<{ invitation: Invitation }> {
    return request('/api/invitations', { method: 'POST', body: { email, role } })
  },
  revokeInvitation(id: string): Promise<void> {
    return request(`/api/invitations/${enc(id)}`, { method: 'DELETE' })
  },
  previewInvitation(token: string): Promise<{ invitation: InvitationPreview }> {
    return request(`/api/invitations/${enc(token)}`)
  },
  acceptInvitation(token: string, displayName: string, password: string): Promise<{ token: string; user: User }> {
    return request(`/api/invitations/${enc(token)}/accept`, { method: 'POST', body: { displayName, password } })
  },
}

/** Password reset by e-mail, and the member's own e-mail choices. */
export const accountApi = {
  requestReset(email: string): Promise<{ message: string }> {
    return request('/api/auth/password-reset', { method: 'POST', body: { email } })
  },
  confirmReset(token: string, newPassword: string): Promise<{ token: string; user: User }> {
    return request('/api/auth/password-reset/confirm', { method: 'POST', body: { token, newPassword } })
  },
  notifications(): Promise<{ notifications: { sweepFinished: boolean } }> {
    return request('/api/me/notifications')
  },
  setNotifications(sweepFinished: boolean): Promise<{ notifications: { sweepFinished: boolean } }> {
    return request('/api/me/notifications', { method: 'PATCH', body: { sweepFinished } })
  },
}
