import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { RouterView } from 'vue-router'
import AcceptInvitationView from '@/views/AcceptInvitationView.vue'
import ResetPasswordView from '@/views/ResetPasswordView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
})

const CODE = 'A'.repeat(43)
const user = {
  id: 'u2',
  email: 'wren@harrowlane.example',
  displayName: 'Wren Okafor',
  role: 'engineer',
  unitSystem: 'us',
  workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
}
const ROUTES = [
  { path: '/invitations/:token', component: AcceptInvitationView, props: true },
  { path: '/reset-password/:token', component: ResetPasswordView, props: true },
  { path: '/scenarios', name: 'scenarios', component: { render: () => null } },
  { path: '/sign-in', component: { render: () => null } },
]

type Wrapper = Awaited<ReturnType<typeof mountApp>>['wrapper']
function messageUnder(wrapper: Wrapper, label: string): string {
  const input = wrapper.findAll('input').find((i) => i.element.labels?.[0]?.textContent?.includes(label))
  return input?.element.closest('.v-input')?.querySelector('.v-messages')?.textContent ?? ''
}
function inputFor(wrapper: Wrapper, label: string) {
  const input = wrapper.findAll('input').find((i) => i.element.labels?.[0]?.textContent?.includes(label))
  if (!input) throw new Error(`no field labelled ${label}`)
  return input
}

describe('AcceptInvitationView', () => {
  it('shows what the invitation offers, the API’s field errors beside the field, then joins and signs in', async () => {
    let attempt = 0
    const { fetchStub, requests } = routeFetch({
      [`GET /api/invitations/${CODE}`]: () => [200, { invitation: { workspaceName: 'Harrow Lane Boostworks', email: user.email, role: 'engineer', expiresAt: '2026-12-09T00:00:00.000Z' } }],
      [`POST /api/invitations/${CODE}/accept`]: () => {
        attempt += 1
        return attempt === 1
          ? [400, { error: { code: 'validation_failed', message: 'This password cannot be used.', fields: { password: 'must not be your e-mail address' } } }]
          : [201, { token: 'new-session', user }]
      },
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper, router } = await mountApp(RouterView, ROUTES, `/invitations/${CODE}`)
    await flushPromises()
    expect(wrapper.find('[data-testid="invitation-facts"]').text()).toContain(user.email)
    expect(wrapper.find('[data-testid="invitation-facts"]').text()).toContain('Engineer')

    await inputFor(wrapper, 'Your name').setValue('Wren Okafor')
    await inputFor(wrapper, 'Choose a password').setValue('wren')
    await wrapper.find('[data-testid="accept-form"]').trigger('submit')
    await flushPromises()
    expect(messageUnder(wrapper, 'Choose a password')).toContain('must not be your e-mail address')

    await inputFor(wrapper, 'Choose a password').setValue('spring seat forty two')
    await wrapper.find('[data-testid="accept-form"]').trigger('submit')
    await flushPromises()
    expect(requests.at(-1)?.body).toEqual({ displayName: 'Wren Okafor', password: 'spring seat forty two' })
    expect(router.currentRoute.value.path).toBe('/scenarios')
    expect(localStorage.getItem('crackpoint.token')).toBe('new-session')
  })

  it('says so when the link is no longer valid', async () => {
    const { fetchStub } = routeFetch({
      [`GET /api/invitations/${CODE}`]: () => [404, { error: { code: 'not_found', message: 'This invitation link is not valid any more. Ask your workspace admin for a new one.' } }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(RouterView, ROUTES, `/invitations/${CODE}`)
    await flushPromises()
    expect(wrapper.find('[data-testid="invitation-missing"]').text()).toContain('not valid any more')
    expect(wrapper.find('[data-testid="accept-form"]').exists()).toBe(false)
  })
})

describe('ResetPasswordView', () => {
  it('checks the repeat, shows a used link plainly, and signs in once the password is set', async () => {
    let attempt = 0
    const { fetchStub, requests } = routeFetch({
      'POST /api/auth/password-reset/confirm': () => {
        attempt += 1
        return attempt === 1
          ? [410, { error: { code: 'reset_link_used', message: 'This reset link was used already (or a newer one was sent).' } }]
          : [200, { token: 'after-reset', user }]
      },
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper, router } = await mountApp(RouterView, ROUTES, `/reset-password/${CODE}`)
    await inputFor(wrapper, 'New password').setValue('new gate new spring')
    await inputFor(wrapper, 'New password again').setValue('new gate new sprung')
    await wrapper.find('[data-testid="reset-form"]').trigger('submit')
    await flushPromises()
    expect(messageUnder(wrapper, 'New password again')).toContain('must be the same as the new password')
    expect(requests).toHaveLength(0)

    await inputFor(wrapper, 'New password again').setValue('new gate new spring')
    await wrapper.find('[data-testid="reset-form"]').trigger('submit')
    await flushPromises()
    expect(wrapper.find('[data-testid="reset-error"]').text()).toContain('used already')
    expect(router.currentRoute.value.path).toBe(`/reset-password/${CODE}`)

    await wrapper.find('[data-testid="reset-form"]').trigger('submit')
    await flushPromises()
    expect(requests.at(-1)?.body).toEqual({ token: CODE, newPassword: 'new gate new spring' })
    expect(router.currentRoute.value.path).toBe('/scenarios')
    expect(localStorage.getItem('crackpoint.token')).toBe('after-reset')
  })
})
