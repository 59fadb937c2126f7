/// <reference types="vite/client" />

// plotly.js-dist-min is the prebuilt bundle of plotly.js and ships no types of its own.
declare module 'plotly.js-dist-min' {
  import * as Plotly from 'plotly.js'
  export default Plotly
}
