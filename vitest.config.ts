import { defineConfig } from 'vitest/config'

export default defineConfig({
  test: {
    projects: [
      { test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node', testTimeout: 30_000 } },
      { test: { name: 'integration', include: ['tests/integration/**/*.test.ts'], environment: 'node', testTimeout: 60_000, hookTimeout: 120_000, fileParallelism: false } },
      {
        test: {
          name: 'e2e', include: ['tests/e2e/**/*.test.ts', 'tests/browser/**/*.test.ts'], environment: 'node',
          globalSetup: ['tests/support/server-setup.ts'], testTimeout: 60_000, hookTimeout: 120_000, fileParallelism: false,
        },
      },
    ],
  },
})
