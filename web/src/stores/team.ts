import { ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { teamApi, type Invitation, type Member } from '@/api/team'
import type { Role } from '@/api/types'

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/** The workspace's members and invitations, for its admins. */
export const useTeamStore = defineStore('team', () => {
  const members = ref<Member[]>([])
  const invitations = ref<Invitation[]>([])
  const loading = ref(false)
  const loaded = ref(false)
  const error = ref<string | null>(null)
  /** Per member: the message of a role change the API refused. */
  const roleErrors = ref<Record<string, string>>({})
  const inviting = ref(false)
  const inviteError = ref<string | null>(null)
  const inviteFields = ref<Record<string, string>>({})
  const lastInvited = ref<string | null>(null)

  async function load(): Promise<void> {
    loading.value = true
    error.value = null
    try {
      const [m, i] = await Promise.all([teamApi.members(), teamApi.invitations()])
      members.value = m.items
      invitations.value = i.items
      loaded.value = true
    } catch (cause) {
      error.value = messageOf(cause, 'The team could not be loaded.')
    } finally {
      loading.value = false
    }
  }

  async function setRole(id: string, role: Role): Promise<void> {
    const { [id]: _dropped, ...rest } = roleErrors.value
    roleErrors.value = rest
    try {
      const { member } = await teamApi.setRole(id, role)
      members.value = members.value.map((m) => (m.id === id ? member : m))
    } catch (cause) {
      roleErrors.value = { ...roleErrors.value, [id]: cause instanceof ApiError ? (cause.fields.role ?? cause.message) : 'The role could not be changed.' }
      // The select shows the role the server still holds.
      members.value = [...members.value]
    }
  }

  async function invite(email: string, role: Role): Promise<boolean> {
    inviting.value = true
    inviteError.value = null
    inviteFields.value = {}
    lastInvited.value = null
    try {
      const { invitation } = await teamApi.invite(email, role)
      invitations.value = [invitation, ...invitations.value.map((i) => (i.email === invitation.email && i.status === 'open' ? { ...i, status: 'revoked' as const } : i))]
      lastInvited.value = invitation.email
      return true
    } catch (cause) {
      if (cause instanceof ApiError) inviteFields.value = { ...cause.fields }
      inviteError.value = messageOf(cause, 'The invitation could not be sent.')
      return false
    } finally {
      inviting.value = false
    }
  }

  async function revoke(id: string): Promise<void> {
    error.value = null
    try {
      await teamApi.revokeInvitation(id)
      invitations.value = invitations.value.map((i) => (i.id === id ? { ...i, status: 'revoked' as const, revokedAt: new Date().toISOString() } : i))
    } catch (cause) {
      error.value = messageOf(cause, 'The invitation could not be revoked.')
    }
  }

  return { members, invitations, loading, loaded, error, roleErrors, inviting, inviteError, inviteFields, lastInvited, load, setRole, invite, revoke }
})
