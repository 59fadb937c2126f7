import { vi } from 'vitest'

// happy-dom has no VisualViewport; Vuetify's overlays (snackbar, menus) read it to place themselves.
if (!('visualViewport' in globalThis)) {
  const viewport = Object.assign(new EventTarget(), {
    get width() {
      return window.innerWidth
    },
    get height() {
      return window.innerHeight
    },
    offsetLeft: 0,
    offsetTop: 0,
    pageLeft: 0,
    pageTop: 0,
    scale: 1,
    onresize: null,
    onscroll: null,
    onscrollend: null,
  })
  Object.defineProperty(globalThis, 'visualViewport', { value: viewport, configurable: true })
}

// Plotly (several MB, WebGL and canvas) does not run in happy-dom. Plots get a stand-in that keeps what
// they were asked to draw on the element, so a test can read the traces.
vi.mock('@/composables/plotly-loader', () => {
  const draw = async (el: HTMLElement, data: unknown, layout: unknown) => {
    Object.assign(el, { plotted: { data, layout } })
    el.setAttribute('data-plotted', 'yes')
  }
  const fake = { react: draw, newPlot: draw, purge: () => undefined, Fx: { hover: () => undefined }, relayout: async () => undefined }
  return { loadPlotly: async () => fake }
})
