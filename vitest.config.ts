import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    pool: 'forks',
    // a temporary directory per test file, removed after it (test/setup/tmpdir.ts)
    setupFiles: ['test/setup/tmpdir.ts'],
  },
});
