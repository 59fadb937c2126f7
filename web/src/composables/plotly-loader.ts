import type PlotlyModule from 'plotly.js-dist-min'

export type Plotly = typeof PlotlyModule

let pending: Promise<Plotly> | null = null

/**
 * What every chart of the product is configured with, whatever it passes itself: nothing of a workspace leaves the
 * product but through its own share links and e-mail, so Plotly's button that sends a chart's data to its makers'
 * cloud (shown by default in this Plotly) is off, its server address is empty, and its logo link is gone.
 */
export const PRIVATE_PLOT_CONFIG = Object.freeze({
  showSendToCloud: false,
  showEditInChartStudio: false,
  plotlyServerURL: '',
  displaylogo: false,
  modeBarButtonsToRemove: ['sendDataToCloud', 'sendChartToCloud', 'editInChartStudio'],
})

/**
 * Plotly is about 4.6 MB: it is fetched the first time a plot is shown, never in the main bundle, and
 * once for every plot on the page. A failed fetch is tried again by the next plot. The private configuration
 * above is set as Plotly's own default before any chart is drawn.
 */
export function loadPlotly(): Promise<Plotly> {
  pending ??= import('plotly.js-dist-min').then((module) => {
    const plotly = module.default
    plotly.setPlotConfig(PRIVATE_PLOT_CONFIG as Parameters<Plotly['setPlotConfig']>[0])
    return plotly
  })
  pending.catch(() => {
    pending = null
  })
  return pending
}
