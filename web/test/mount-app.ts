import { defineComponent, h, type Component } from 'vue'
import { mount } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import { createMemoryHistory, createRouter, type RouteRecordRaw } from 'vue-router'
import { createVuetify } from 'vuetify'
import { VApp } from 'vuetify/components'

/**
 * Mounts `component` inside a v-app with fresh Pinia, Vuetify and an in-memory router, as main.ts does.
 * `routes` replaces the app's routes so a test renders only what it needs.
 */
export async function mountApp(component: Component, routes: RouteRecordRaw[] = [], path = '/') {
  const pinia = createPinia()
  setActivePinia(pinia)
  const vuetify = createVuetify()
  const router = createRouter({
    history: createMemoryHistory(),
    routes: routes.length ? routes : [{ path: '/:rest(.*)*', component: { render: () => null } }],
  })
  await router.push(path)
  await router.isReady()
  const Root = defineComponent({ render: () => h(VApp, () => h(component)) })
  const wrapper = mount(Root, { global: { plugins: [pinia, vuetify, router] }, attachTo: document.body })
  return { wrapper, router, pinia }
}

/** A fetch stand-in answering one JSON response, recording what was asked. */
export function answerJson(status: number, body: unknown) {
  const calls: { url: string; init: RequestInit | undefined }[] = []
  const fetchStub = async (url: string | URL | Request, init?: RequestInit) => {
    calls.push({ url: String(url), init })
    return new Response(JSON.stringify(body), { status, headers: { 'Content-Type': 'application/json' } })
  }
  return { fetchStub, calls }
}

type Handler = (body: unknown, url: URL) => [status: number, body: unknown]

/**
 * A fetch stand-in that answers by "METHOD /path" (query left out), recording every request in order.
 * An unexpected request answers 599 so the test sees it fail rather than hang.
 */
export function routeFetch(handlers: Record<string, Handler>) {
  const requests: { key: string; url: URL; body: unknown; headers: Record<string, string> }[] = []
  const fetchStub = async (input: string | URL | Request, init?: RequestInit) => {
    const url = new URL(String(input), 'http://localhost')
    const key = `${init?.method ?? 'GET'} ${url.pathname}`
    const body = typeof init?.body === 'string' ? (JSON.parse(init.body) as unknown) : undefined
    requests.push({ key, url, body, headers: { ...(init?.headers as Record<string, string> | undefined) } })
    const handler = handlers[key]
    const [status, answer] = handler ? handler(body, url) : [599, { error: { code: 'unexpected', message: key } }]
    return new Response(JSON.stringify(answer), { status, headers: { 'Content-Type': 'application/json' } })
  }
  return { fetchStub, requests }
}
