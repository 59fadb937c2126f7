import { fileURLToPath, URL } from 'node:url'
import { defineConfig } from 'vite'
import vue from '@vitejs/plugin-vue'
import vuetify from 'vite-plugin-vuetify'

export default defineConfig({
  plugins: [vue(), vuetify({ autoImport: true })],
  resolve: {
    alias: {
      '@': fileURLToPath(new URL('./src', import.meta.url)),
    },
  },
  server: {
    host: '127.0.0.1',
    proxy: {
      '/api': 'http://127.0.0.1:8080',
    },
  },
  // The pull worker is started as a module worker (`type: 'module'`), so it is bundled as one.
  worker: {
    format: 'es',
  },
  build: {
    // Plotly alone is ~4.6 MB; it is loaded on demand by the surface plot, so only that chunk is big.
    chunkSizeWarningLimit: 5000,
  },
})
