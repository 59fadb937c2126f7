import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import SignInView from '@/views/SignInView.vue'
import { answerJson, mountApp } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
})

describe('SignInView', () => {
  it('shows the message the API gives for a wrong password and stays signed out', async () => {
    const { fetchStub, calls } = answerJson(401, {
      error: { code: 'invalid_credentials', message: 'E-mail or password is not right.' },
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(SignInView)

    await wrapper.find('input[type="email"]').setValue('engineer@harrowlane.example')
    await wrapper.find('input[type="password"]').setValue('not-the-password')
    await wrapper.find('form').trigger('submit')
    await flushPromises()

    expect(calls).toHaveLength(1)
    expect(calls[0]?.url).toBe('/api/auth/sign-in')
    expect(JSON.parse(String(calls[0]?.init?.body))).toEqual({
      email: 'engineer@harrowlane.example',
      password: 'not-the-password',
    })
    expect(wrapper.find('[data-testid="sign-in-error"]').text()).toContain('E-mail or password is not right.')
    expect(localStorage.getItem('crackpoint.token')).toBeNull()
  })

  it('shows and hides the password with a labelled button', async () => {
    const { wrapper } = await mountApp(SignInView)
    const toggle = wrapper.find('button[aria-label="Show password"]')
    expect(toggle.exists()).toBe(true)
    await toggle.trigger('click')
    expect(wrapper.find('input[autocomplete="current-password"]').attributes('type')).toBe('text')
    expect(wrapper.find('button[aria-label="Hide password"]').exists()).toBe(true)
  })

  it('stores the token and goes to the page asked for when the API accepts', async () => {
    const user = {
      id: 'u1',
      email: 'engineer@harrowlane.example',
      displayName: 'Shop engineer',
      role: 'engineer',
      unitSystem: 'us',
      workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
    }
    vi.stubGlobal('fetch', answerJson(200, { token: 'signed.token.value', user }).fetchStub)
    const { wrapper, router } = await mountApp(
      SignInView,
      [
        { path: '/sign-in', component: SignInView },
        { path: '/register', component: { render: () => null } },
        { path: '/scenarios/:id', component: { render: () => null } },
      ],
      '/sign-in?next=/scenarios/abc',
    )

    await wrapper.find('input[type="email"]').setValue('engineer@harrowlane.example')
    await wrapper.find('input[type="password"]').setValue('crackpoint-demo')
    await wrapper.find('form').trigger('submit')
    // A dialog on the page (Vuetify's back-button guard) lets a navigation finish only after a timer,
    // which a loaded machine may run late: wait for the route rather than for one tick.
    await flushPromises()
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/scenarios/abc'))

    expect(localStorage.getItem('crackpoint.token')).toBe('signed.token.value')
    expect(wrapper.find('[data-testid="sign-in-error"]').exists()).toBe(false)
  })
})
