import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

// Vitest gets its own config (root '.') so it finds server, shared and test files, not only client ones.
export default defineConfig({
  resolve: { alias: { '@shared': fileURLToPath(new URL('./shared', import.meta.url)) } },
  test: {
    root: '.',
    environment: 'node',
    include: ['tests/**/*.test.ts', 'server/**/*.test.ts', 'shared/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    pool: 'forks',
    maxWorkers: 2,
  },
});
