import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    // Pipeline and browser tests build a whole release or report; allow them time on a slow CI machine.
    testTimeout: 120_000,
    hookTimeout: 120_000,
    // Separate processes: tests that start child processes (Python, a browser) stay isolated.
    pool: 'forks',
  },
});
