import { defineConfig } from 'vitest/config';
import path from 'node:path';

// Unit tests (pure cores) and integration tests (real MariaDB, real HTTP server) share one run;
// scripts/run.mjs test starts the services and passes their addresses through the environment.
export default defineConfig({
  resolve: {
    alias: {
      '@': path.resolve(__dirname),
      'server-only': path.resolve(__dirname, 'tests/support/empty.ts'),
    },
  },
  test: {
    include: ['tests/**/*.test.ts'],
    environment: 'node',
    testTimeout: 60_000,
    hookTimeout: 120_000,
    fileParallelism: false,
    reporters: ['default'],
  },
});
