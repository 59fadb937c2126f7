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
