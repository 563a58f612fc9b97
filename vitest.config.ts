import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts', 'tests/**/*.test.tsx'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
    setupFiles: ['tests/support/setup.ts'],
  },
});
