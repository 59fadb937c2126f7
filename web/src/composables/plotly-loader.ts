import type PlotlyModule from 'plotly.js-dist-min'

export type Plotly = typeof PlotlyModule

let pending: Promise<Plotly> | null = null

/**
 * Plotly is about 4.6 MB: it is fetched the first time a plot is shown, never in the main bundle, and
 * once for every plot on the page. A failed fetch is tried again by the next plot.
 */
export function loadPlotly(): Promise<Plotly> {
  pending ??= import('plotly.js-dist-min').then((module) => module.default)
  pending.catch(() => {
    pending = null
  })
  return pending
}
