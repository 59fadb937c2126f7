import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { RouterView } from 'vue-router'
import AppShell from '@/components/AppShell.vue'
import { useSessionStore } from '@/stores/session'
import { mountApp } from './mount-app'

enableAutoUnmount(afterEach)

const blank = { render: () => null }

async function mountAt(path: string) {
  const mounted = await mountApp(
    RouterView,
    [
      {
        path: '/',
        component: AppShell,
        children: [
          { path: 'library/:kind', name: 'library', component: blank },
          { path: 'scenarios', name: 'scenarios', component: blank },
        ],
      },
      { path: '/sign-in', name: 'sign-in', component: blank },
    ],
    path,
  )
  useSessionStore().user = {
    id: 'u1',
    email: 'engineer@harrowlane.example',
    displayName: 'Shop member',
    role: 'engineer',
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  await flushPromises()
  return mounted
}

function navItem(title: string): Element {
  const item = [...document.querySelectorAll('nav .v-list-item')].find((el) => el.textContent?.trim() === title)
  if (!item) throw new Error(`no navigation item ${title}`)
  return item
}

describe('AppShell navigation', { timeout: 20_000 }, () => {
  it('highlights Library on every library tab, and only there', async () => {
    const { router } = await mountAt('/library/springs')
    expect(navItem('Library').classList).toContain('v-list-item--active')
    expect(navItem('Scenarios').classList).not.toContain('v-list-item--active')

    await router.push('/library/wastegates')
    await flushPromises()
    expect(navItem('Library').classList).toContain('v-list-item--active')

    await router.push('/scenarios')
    await flushPromises()
    expect(navItem('Library').classList).not.toContain('v-list-item--active')
    expect(navItem('Scenarios').classList).toContain('v-list-item--active')
  })
})
