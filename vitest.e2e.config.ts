import { defineConfig } from 'vitest/config'

// Browser tests: headless Debian Chromium through playwright-core against the built app.
export default defineConfig({
  test: {
    include: ['tests/e2e/**/*.test.ts'],
    environment: 'node',
    fileParallelism: false,
    testTimeout: 120000,
    hookTimeout: 120000,
  },
})
