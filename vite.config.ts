import { fileURLToPath, URL } from 'node:url'
import { defineConfig } from 'vite'
import vue from '@vitejs/plugin-vue'

const api = `http://127.0.0.1:${process.env.PORT ?? 3000}`

export default defineConfig({
  plugins: [vue()],
  resolve: { alias: { '@': fileURLToPath(new URL('./src', import.meta.url)) } },
  worker: { format: 'es' },
  build: { outDir: 'dist', chunkSizeWarningLimit: 5000 },
  server: {
    port: 5173,
    proxy: {
      '/api': api,
      '/dev': api,
      '/collab': { target: api.replace('http', 'ws'), ws: true },
    },
  },
})
