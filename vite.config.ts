import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';
import { fileURLToPath } from 'node:url';

const r = (p: string) => fileURLToPath(new URL(p, import.meta.url));

export default defineConfig({
  plugins: [react(), tailwindcss()],
  resolve: { alias: { '@shared': r('./shared'), '@': r('./src') } },
  server: {
    port: 5173,
    proxy: { '/api': { target: `http://127.0.0.1:${process.env.PORT ?? 3000}`, changeOrigin: false } },
  },
  build: { outDir: 'dist/client', emptyOutDir: true, sourcemap: false },
  worker: { format: 'es' },
  test: {
    include: ['tests/**/*.test.ts', 'tests/**/*.test.tsx'],
    exclude: ['tests/e2e/**', 'node_modules/**'],
    setupFiles: ['tests/utils/setup.ts'],
    pool: 'forks',
    testTimeout: 30000,
    hookTimeout: 60000,
  },
});
