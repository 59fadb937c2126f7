import { ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { accountApi } from '@/api/team'
import { useSessionStore } from './session'

/** The member's e-mail choices ("your sweep finished") and setting a new password by e-mail. */
export const useAccountStore = defineStore('account', () => {
  const sweepFinished = ref<boolean | null>(null)
  const saving = ref(false)
  const error = ref<string | null>(null)

  async function load(): Promise<void> {
    error.value = null
    try {
      sweepFinished.value = (await accountApi.notifications()).notifications.sweepFinished
    } catch (cause) {
      error.value = cause instanceof ApiError ? cause.message : 'Your e-mail choices could not be loaded.'
    }
  }

  async function setSweepFinished(on: boolean): Promise<void> {
    saving.value = true
    error.value = null
    try {
      sweepFinished.value = (await accountApi.setNotifications(on)).notifications.sweepFinished
    } catch (cause) {
      error.value = cause instanceof ApiError ? cause.message : 'The choice could not be saved.'
    } finally {
      saving.value = false
    }
  }

  const resetBusy = ref(false)
  const resetError = ref<string | null>(null)
  const resetFields = ref<Record<string, string>>({})
  /** What the API said after a reset request (the same words whether or not the account exists). */
  const resetRequested = ref<string | null>(null)

  async function requestReset(email: string): Promise<void> {
    resetBusy.value = true
    resetError.value = null
    resetFields.value = {}
    resetRequested.value = null
    try {
      resetRequested.value = (await accountApi.requestReset(email)).message
    } catch (cause) {
      if (cause instanceof ApiError) resetFields.value = { ...cause.fields }
      resetError.value = cause instanceof ApiError ? cause.message : 'The request did not go through. Try again.'
    } finally {
      resetBusy.value = false
    }
  }

  /** Sets the new password; the answer's session replaces any other on this device. */
  async function confirmReset(token: string, newPassword: string): Promise<boolean> {
    resetBusy.value = true
    resetError.value = null
    resetFields.value = {}
    try {
      useSessionStore().adopt(await accountApi.confirmReset(token, newPassword))
      return true
    } catch (cause) {
      if (cause instanceof ApiError) resetFields.value = { ...cause.fields }
      resetError.value = cause instanceof ApiError ? cause.message : 'The new password could not be set. Try again.'
      return false
    } finally {
      resetBusy.value = false
    }
  }

  function clearReset(): void {
    resetError.value = null
    resetFields.value = {}
    resetRequested.value = null
  }

  return {
    sweepFinished,
    saving,
    error,
    load,
    setSweepFinished,
    resetBusy,
    resetError,
    resetFields,
    resetRequested,
    requestReset,
    confirmReset,
    clearReset,
  }
})
