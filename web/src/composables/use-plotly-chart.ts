import { onBeforeUnmount, onMounted, ref, watch, type Ref, type WatchSource } from 'vue'
import { loadPlotly, type Plotly } from './plotly-loader'

/**
 * A Plotly chart in `el`: loads Plotly on first use, paints on mount and whenever `sources` change, and frees
 * the chart on unmount. Paints never overlap — a change during one is painted once it ends — because Plotly
 * mixes up the state of two drawings into the same element.
 */
export function usePlotlyChart(
  el: Ref<HTMLElement | null>,
  paint: (plotly: Plotly, target: HTMLElement) => Promise<unknown>,
  sources: WatchSource<unknown>[],
): { loading: Ref<boolean>; failed: Ref<boolean> } {
  const loading = ref(true)
  const failed = ref(false)
  let plotly: Plotly | null = null

  async function render(): Promise<void> {
    if (!el.value) return
    try {
      plotly ??= await loadPlotly()
    } catch {
      failed.value = true
      loading.value = false
      return
    }
    if (!el.value) return
    await paint(plotly, el.value)
    loading.value = false
  }

  let drawing: Promise<void> | null = null
  let again = false
  async function draw(): Promise<void> {
    if (drawing) {
      again = true
      return drawing
    }
    drawing = (async () => {
      do {
        again = false
        await render()
      } while (again)
    })()
    try {
      await drawing
    } finally {
      drawing = null
    }
  }

  onMounted(() => void draw())
  watch(sources, () => void draw())
  onBeforeUnmount(() => {
    if (plotly && el.value) plotly.purge(el.value)
  })
  return { loading, failed }
}
