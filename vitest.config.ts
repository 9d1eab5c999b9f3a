import { defineConfig } from 'vitest/config';

// Two cores on the reference machine: keep files in parallel but bounded.
export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    environment: 'node',
    maxWorkers: 2,
    testTimeout: 60_000,
    hookTimeout: 120_000,
    reporters: ['default'],
  },
});
