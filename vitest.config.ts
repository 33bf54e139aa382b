// Four suites: unit (no server), api and e2e (against the built app and a
// fresh test database started by docker-free-scripts/test.sh), and fault (a
// whole `npm start` of its own, on its own cluster and ports, under faults).
import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vitest/config'

export default defineConfig({
  // the app's root alias, so modules the app and the unit tests share read the same
  resolve: { alias: { '~~': fileURLToPath(new URL('.', import.meta.url)) } },
  test: {
    globalSetup: ['tests/support/server-setup.ts'],
    projects: [
      { extends: true, test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], testTimeout: 60_000 } },
      { test: { name: 'api', include: ['tests/api/**/*.test.ts'], fileParallelism: false, testTimeout: 60_000, hookTimeout: 120_000 } },
      { test: { name: 'e2e', include: ['tests/e2e/**/*.test.ts'], fileParallelism: false, testTimeout: 120_000, hookTimeout: 120_000 } },
      { test: { name: 'fault', include: ['tests/fault/**/*.test.ts'], fileParallelism: false, testTimeout: 200_000, hookTimeout: 200_000 } },
    ],
  },
})
