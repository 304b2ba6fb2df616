import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

const r = (p: string) => fileURLToPath(new URL(p, import.meta.url));

export default defineConfig({
  resolve: { alias: { '@shared': r('./shared'), '@': r('./src') } },
  test: {
    include: ['tests/e2e/**/*.test.ts'],
    globalSetup: ['tests/e2e/global-setup.ts'],
    setupFiles: ['tests/utils/setup.ts'],
    pool: 'forks',
    fileParallelism: false,
    testTimeout: 120000,
    hookTimeout: 180000,
  },
});
