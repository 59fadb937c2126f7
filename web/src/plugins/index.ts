import type { App } from 'vue'
import { onUnauthorized } from '@/api/http'
import { useSessionStore } from '@/stores/session'
import { pinia } from './pinia'
import { router } from './router'
import { vuetify } from './vuetify'

export function registerPlugins(app: App): void {
  app.use(pinia).use(router).use(vuetify)

  // An expired or revoked token ends the session wherever the user is; they come back to the same page.
  onUnauthorized(() => {
    useSessionStore(pinia).signOut()
    const current = router.currentRoute.value
    if (!current.meta.public) void router.replace({ name: 'sign-in', query: { next: current.fullPath } })
  })
}
