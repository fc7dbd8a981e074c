import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    environment: 'node',
    // forks suit native addons (better-sqlite3) and child processes (stack.md §7)
    pool: 'forks',
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
