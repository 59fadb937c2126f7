import { createRouter, createWebHistory, type RouteRecordRaw } from 'vue-router'
import { useSessionStore } from '@/stores/session'

declare module 'vue-router' {
  interface RouteMeta {
    /** Reachable without signing in. */
    public?: boolean
    title?: string
  }
}

const routes: RouteRecordRaw[] = [
  { path: '/', redirect: { name: 'scenarios' } },
  {
    path: '/sign-in',
    name: 'sign-in',
    component: () => import('@/views/SignInView.vue'),
    meta: { public: true, title: 'Sign in' },
  },
  {
    path: '/register',
    name: 'register',
    component: () => import('@/views/RegisterView.vue'),
    meta: { public: true, title: 'Start a workspace' },
  },
  {
    path: '/invitations/:token',
    name: 'accept-invitation',
    component: () => import('@/views/AcceptInvitationView.vue'),
    props: true,
    meta: { public: true, title: 'Join a workspace' },
  },
  {
    path: '/reset-password/:token',
    name: 'reset-password',
    component: () => import('@/views/ResetPasswordView.vue'),
    props: true,
    meta: { public: true, title: 'Set a new password' },
  },
  {
    // Outside the app shell and without signing in: a share link's holder sees this page alone.
    path: '/shared/:token',
    name: 'shared',
    component: () => import('@/views/SharedView.vue'),
    props: true,
    meta: { public: true, title: 'Shared' },
  },
  {
    // Outside the app shell: the sheet is a page of its own, to print or save as PDF.
    path: '/scenarios/:id/sheet',
    name: 'setup-sheet',
    component: () => import('@/views/SetupSheetView.vue'),
    props: true,
    meta: { title: 'Setup sheet' },
  },
  {
    path: '/',
    component: () => import('@/components/AppShell.vue'),
    children: [
      {
        path: 'scenarios',
        name: 'scenarios',
        component: () => import('@/views/ScenarioListView.vue'),
        meta: { title: 'Scenarios' },
      },
      {
        path: 'scenarios/:id',
        name: 'scenario',
        component: () => import('@/views/ScenarioView.vue'),
        props: true,
        meta: { title: 'Scenario' },
      },
      {
        path: 'compare',
        name: 'compare',
        component: () => import('@/views/CompareView.vue'),
        meta: { title: 'Compare' },
      },
      { path: 'library', redirect: { name: 'library', params: { kind: 'wastegates' } } },
      {
        path: 'library/:kind',
        name: 'library',
        component: () => import('@/views/LibraryView.vue'),
        props: true,
        meta: { title: 'Library' },
      },
      {
        path: 'usage',
        name: 'usage',
        component: () => import('@/views/UsageView.vue'),
        meta: { title: 'Usage' },
      },
      {
        // Admins buy compute here; the payment provider's checkout sends the buyer back with ?purchase=<id>.
        path: 'billing',
        name: 'billing',
        component: () => import('@/views/BillingView.vue'),
        meta: { title: 'Billing' },
      },
      {
        path: 'team',
        name: 'team',
        component: () => import('@/views/TeamView.vue'),
        meta: { title: 'Team' },
      },
      {
        path: 'logs',
        name: 'logs',
        component: () => import('@/views/DatalogsView.vue'),
        meta: { title: 'Logs' },
      },
      {
        path: ':pathMatch(.*)*',
        name: 'not-found',
        component: () => import('@/views/NotFoundView.vue'),
        meta: { title: 'Not found' },
      },
    ],
  },
]

export const router = createRouter({
  history: createWebHistory(import.meta.env.BASE_URL),
  routes,
})

router.beforeEach(async (to) => {
  const session = useSessionStore()
  if (to.meta.public) {
    if ((to.name === 'sign-in' || to.name === 'register') && session.isSignedIn) return { name: 'scenarios' }
    return true
  }
  if (!session.isSignedIn) return { name: 'sign-in', query: { next: to.fullPath } }
  try {
    await session.ensureUser()
  } catch {
    // A rejected token has signed the user out; any other failure (network) lets the page show its own error.
    if (!session.isSignedIn) return { name: 'sign-in', query: { next: to.fullPath } }
  }
  return true
})

router.afterEach((to) => {
  document.title = to.meta.title ? `${to.meta.title} · Crackpoint` : 'Crackpoint'
})
