import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import RegisterView from '@/views/RegisterView.vue'
import SignInView from '@/views/SignInView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
})

const ROUTES = [
  { path: '/register', component: RegisterView },
  { path: '/sign-in', component: SignInView },
  { path: '/scenarios', component: { render: () => null } },
]

const user = {
  id: 'u1',
  email: 'owner@harrowlane.example',
  displayName: 'Shop owner',
  role: 'admin',
  unitSystem: 'metric',
  workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
}

async function fill(wrapper: Awaited<ReturnType<typeof mountApp>>['wrapper'], password: string) {
  await wrapper.find('[data-testid="register-workspace"] input').setValue('Harrow Lane Boostworks')
  await wrapper.find('[data-testid="register-name"] input').setValue('Shop owner')
  await wrapper.find('[data-testid="register-email"] input').setValue('owner@harrowlane.example')
  await wrapper.find('[data-testid="register-password"] input').setValue(password)
}

function messageUnder(wrapper: Awaited<ReturnType<typeof mountApp>>['wrapper'], testId: string): string {
  return wrapper.find(`[data-testid="${testId}"]`).element.closest('.v-input')?.querySelector('.v-messages')?.textContent ?? ''
}

describe('RegisterView', () => {
  it('is reached from the sign-in page', async () => {
    const { wrapper, router } = await mountApp(SignInView, ROUTES, '/sign-in')
    expect(wrapper.text()).toContain('New here?')
    await wrapper.find('[data-testid="to-register"]').trigger('click')
    // A dialog on the page (Vuetify's back-button guard) lets a navigation finish only after a timer,
    // which a loaded machine may run late: wait for the route rather than for one tick.
    await flushPromises()
    await vi.waitFor(() => expect(router.currentRoute.value.path).toBe('/register'))
  })

  it('says what is missing beside each empty field and sends nothing', async () => {
    const { fetchStub, requests } = routeFetch({})
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(RegisterView, ROUTES, '/register')

    await wrapper.find('[data-testid="register-password"] input').setValue('short')
    await wrapper.find('[data-testid="register-submit"]').trigger('click')
    await wrapper.find('form').trigger('submit')
    await flushPromises()

    expect(requests).toHaveLength(0)
    expect(messageUnder(wrapper, 'register-workspace')).toContain('Give the workspace a name')
    expect(messageUnder(wrapper, 'register-name')).toContain('Say what the team should call you')
    expect(messageUnder(wrapper, 'register-email')).toContain('An e-mail address is needed')
    expect(messageUnder(wrapper, 'register-password')).toContain('Must be at least 10 characters')
  })

  it('puts the API answer for a taken e-mail under the e-mail field', async () => {
    const { fetchStub, requests } = routeFetch({
      'POST /api/auth/register': () => [
        409,
        {
          error: {
            code: 'email_taken',
            message: 'An account with this e-mail already exists. Sign in instead.',
            fields: { email: 'is already registered' },
          },
        },
      ],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(RegisterView, ROUTES, '/register')

    await fill(wrapper, 'long-enough-password')
    await wrapper.find('form').trigger('submit')
    await flushPromises()

    expect(requests).toHaveLength(1)
    expect(requests[0]?.body).toEqual({
      workspaceName: 'Harrow Lane Boostworks',
      displayName: 'Shop owner',
      email: 'owner@harrowlane.example',
      password: 'long-enough-password',
      unitSystem: 'us',
    })
    expect(messageUnder(wrapper, 'register-email')).toContain('Is already registered')
    expect(messageUnder(wrapper, 'register-password')).not.toContain('Is already registered')
    expect(localStorage.getItem('crackpoint.token')).toBeNull()

    await wrapper.find('[data-testid="register-email"] input').setValue('other@harrowlane.example')
    expect(messageUnder(wrapper, 'register-email')).not.toContain('Is already registered')
  })

  it('signs the new admin in with the chosen units and opens the scenarios', async () => {
    const { fetchStub, requests } = routeFetch({ 'POST /api/auth/register': () => [201, { token: 'new.token', user }] })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper, router } = await mountApp(RegisterView, ROUTES, '/register')

    await fill(wrapper, 'long-enough-password')
    const metric = wrapper.findAll('input[type="radio"]').find((input) => (input.element as HTMLInputElement).value === 'metric')
    await metric?.setValue(true)
    await wrapper.find('form').trigger('submit')
    // A dialog on the page (Vuetify's back-button guard) lets a navigation finish only after a timer.
    await flushPromises()
    await vi.waitFor(() => expect(localStorage.getItem('crackpoint.token')).toBe('new.token'))

    expect((requests[0]?.body as { unitSystem: string }).unitSystem).toBe('metric')
    expect(localStorage.getItem('crackpoint.token')).toBe('new.token')
    expect(localStorage.getItem('crackpoint.unitSystem')).toBe('metric')
    expect(router.currentRoute.value.path).toBe('/scenarios')
  })
})
