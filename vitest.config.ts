import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    // Two cores: keep the test files from starving each other's worker pools.
    maxWorkers: 2,
  },
});
