import { defineComponent, h } from 'vue'
import { RouterView } from 'vue-router'
import { flushPromises } from '@vue/test-utils'
import { defaultScenario, type Scenario } from '@crackpoint/sim-core'
import AppShell from '@/components/AppShell.vue'
import BalancePanel from '@/components/BalancePanel.vue'
import PullPanel from '@/components/PullPanel.vue'
import ScenarioForm from '@/components/ScenarioForm.vue'
import TargetPanel from '@/components/TargetPanel.vue'
import { useScenarioStore } from '@/stores/scenario'
import { useSessionStore } from '@/stores/session'
import { mountApp } from './mount-app'

const EDITOR = defineComponent({
  props: { withPull: { type: Boolean, default: false }, withTarget: { type: Boolean, default: false } },
  setup(props) {
    const store = useScenarioStore()
    return () =>
      h('div', [
        h(ScenarioForm),
        h(BalancePanel, { live: store.live }),
        props.withTarget ? h(TargetPanel) : null,
        props.withPull ? h(PullPanel) : null,
      ])
  },
})

/**
 * The scenario form and the live balance inside the app shell (for its unit switch), with `data` open as
 * an engineer's scenario; sim-core's default scenario unless given. `withPull` adds the pull panel, `withTarget` the
 * target solve.
 */
export async function mountEditor(data: Scenario = defaultScenario(), options: { withPull?: boolean; withTarget?: boolean } = {}) {
  const mounted = await mountApp(RouterView, [
    {
      path: '/',
      component: AppShell,
      children: [{ path: '', component: EDITOR, props: { withPull: options.withPull ?? false, withTarget: options.withTarget ?? false } }],
    },
    { path: '/scenarios', name: 'scenarios', component: { render: () => null } },
    { path: '/sign-in', name: 'sign-in', component: { render: () => null } },
  ])
  const session = useSessionStore()
  session.user = {
    id: 'u1',
    email: 'engineer@harrowlane.example',
    displayName: 'Shop engineer',
    role: 'engineer',
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  const store = useScenarioStore()
  store.open({
    id: 's1',
    name: 'Demo',
    data,
    version: 1,
    ownerId: 'u1',
    createdAt: '2025-01-01T00:00:00Z',
    updatedAt: '2025-01-01T00:00:00Z',
  })
  await flushPromises()
  return mounted
}
