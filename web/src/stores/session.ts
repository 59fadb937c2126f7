import { computed, ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { authApi, type RegisterInput } from '@/api/auth'
import { tokenStorage } from '@/api/token-storage'
import type { Role, UnitSystem, User } from '@/api/types'

const UNIT_KEY = 'crackpoint.unitSystem'

/** Roles that may create and run scenarios and sweeps (DESIGN.md, roles table). */
const COMPUTE_ROLES: readonly Role[] = ['admin', 'engineer', 'builder']
/** Roles that may change the shared hardware library (DESIGN.md, roles table). */
const LIBRARY_EDIT_ROLES: readonly Role[] = ['admin', 'engineer']
/** Roles that make read-only share links (DESIGN.md: analysts share; builders do not). */
const SHARE_ROLES: readonly Role[] = ['admin', 'engineer', 'analyst']

function storedUnitSystem(): UnitSystem | null {
  const value = localStorage.getItem(UNIT_KEY)
  return value === 'us' || value === 'metric' ? value : null
}

/** Who is signed in, their token, and the unit system every number on screen follows. */
export const useSessionStore = defineStore('session', () => {
  const token = ref<string | null>(tokenStorage.get())
  const user = ref<User | null>(null)
  const unitChoice = ref<UnitSystem | null>(storedUnitSystem())

  const isSignedIn = computed(() => token.value !== null)
  /** The user's own choice on this device wins over the profile's default. */
  const unitSystem = computed<UnitSystem>(() => unitChoice.value ?? user.value?.unitSystem ?? 'us')
  const canCompute = computed(() => user.value !== null && COMPUTE_ROLES.includes(user.value.role))
  const canEditLibrary = computed(() => user.value !== null && LIBRARY_EDIT_ROLES.includes(user.value.role))
  const canShare = computed(() => user.value !== null && SHARE_ROLES.includes(user.value.role))
  /**
   * Whether the user may edit, run or stop a record another member (or they) made: compute roles may, builders only
   * on their own (the API's OWN_ONLY rule).
   */
  function mayActOn(ownerId: string | null | undefined): boolean {
    if (!canCompute.value || user.value === null) return false
    return user.value.role !== 'builder' || ownerId === user.value.id
  }

  async function signIn(email: string, password: string): Promise<void> {
    const result = await authApi.signIn(email, password)
    tokenStorage.set(result.token)
    token.value = result.token
    user.value = result.user
  }

  async function register(input: RegisterInput): Promise<void> {
    const result = await authApi.register(input)
    tokenStorage.set(result.token)
    token.value = result.token
    user.value = result.user
    setUnitSystem(result.user.unitSystem)
  }

  /** A session the API opened some other way (an accepted invitation, a password reset). */
  function adopt(result: { token: string; user: User }): void {
    tokenStorage.set(result.token)
    token.value = result.token
    user.value = result.user
  }

  /** Loads the profile behind a stored token; a rejected token signs the user out. */
  async function ensureUser(): Promise<User | null> {
    if (!token.value) return null
    if (user.value) return user.value
    try {
      user.value = (await authApi.me()).user
      return user.value
    } catch (error) {
      if (error instanceof ApiError && error.status === 401) signOut()
      throw error
    }
  }

  function signOut(): void {
    tokenStorage.clear()
    token.value = null
    user.value = null
  }

  function setUnitSystem(system: UnitSystem): void {
    unitChoice.value = system
    localStorage.setItem(UNIT_KEY, system)
  }

  return { token, user, isSignedIn, unitSystem, canCompute, canEditLibrary, canShare, mayActOn, signIn, register, adopt, ensureUser, signOut, setUnitSystem }
})
