import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    // pty and process tests spawn real processes: keep parallelism modest on 2 cores
    maxWorkers: 2,
  },
});
