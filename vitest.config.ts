import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vitest/config'
import { defineVitestProject } from '@nuxt/test-utils/config'
import AfterAllSequencer from './tests/support/after-all-sequencer'

// app/utils import shared code as the app does; node tests of them resolve the alias the same way
const alias = { '#shared': fileURLToPath(new URL('./shared', import.meta.url)) }

export default defineConfig({
  test: {
    // files named *.after-all.test.ts run after the rest of their project (the server log check)
    sequence: { sequencer: AfterAllSequencer },
    projects: [
      { resolve: { alias }, test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node', testTimeout: 30_000 } },
      { test: { name: 'integration', include: ['tests/integration/**/*.test.ts'], environment: 'node', testTimeout: 60_000, hookTimeout: 120_000, fileParallelism: false } },
      {
        test: {
          name: 'e2e', include: ['tests/e2e/**/*.test.ts', 'tests/browser/**/*.test.ts'], environment: 'node',
          globalSetup: ['tests/support/server-setup.ts'], testTimeout: 60_000, hookTimeout: 120_000, fileParallelism: false,
        },
      },
      // hostile input and other fast reliability checks, against a test server of their own; they run after every
      // other project (groupOrder 1), since they compare every table before and after and no other test may write meanwhile
      {
        test: {
          name: 'reliability', include: ['tests/reliability/*.test.ts'], environment: 'node', sequence: { groupOrder: 1 },
          globalSetup: ['tests/support/server-setup.ts'], testTimeout: 300_000, hookTimeout: 120_000, fileParallelism: false,
        },
      },
      // load and fault tests with their own MariaDB and servers: only `npm run test:reliability` runs them
      ...(process.env.TERCET_FAULTS === '1'
        ? [{ test: { name: 'faults', include: ['tests/reliability/faults/**/*.test.ts'], environment: 'node', testTimeout: 900_000, hookTimeout: 600_000, fileParallelism: false } }]
        : []),
      // the three-node cluster with two app instances behind HAProxy: only `npm run test:cluster` runs them
      ...(process.env.TERCET_CLUSTER_TESTS === '1'
        ? [{ test: { name: 'cluster', include: ['tests/cluster/**/*.test.ts'], environment: 'node', testTimeout: 900_000, hookTimeout: 900_000, fileParallelism: false } }]
        : []),
      // components, composables and pages of app/, mounted in a Nuxt runtime over happy-dom: no server, no database
      await defineVitestProject({
        // Vite refuses the public-file import Nuxt makes of <img src="/favicon.svg"> ("Denied ID virtual:public?…svg")
        // under strict file serving; this dev server only serves the test runner
        server: { fs: { strict: false } },
        test: {
          name: 'app', include: ['tests/app/**/*.test.ts'], environment: 'nuxt', testTimeout: 30_000, hookTimeout: 120_000,
          environmentOptions: { nuxt: { domEnvironment: 'happy-dom' } },
        },
      }),
    ],
  },
})
