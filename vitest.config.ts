import { defineConfig } from 'vitest/config'

export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'unit',
          include: ['tests/unit/**/*.test.ts'],
          environment: 'node',
          testTimeout: 60_000,
        },
      },
      {
        test: {
          name: 'server',
          include: ['tests/server/**/*.test.ts'],
          environment: 'node',
          globalSetup: ['tests/support/globalSetup.ts'],
          testTimeout: 30_000,
          hookTimeout: 60_000,
          // One server, one database: files run one after another so throttling counts stay predictable.
          fileParallelism: false,
        },
      },
    ],
  },
})
