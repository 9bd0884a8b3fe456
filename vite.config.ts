import { defineConfig } from 'vitest/config';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

const serverPort = Number(process.env.PLEAT_PORT ?? 4180);

export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: { outDir: 'dist/web', emptyOutDir: true },
  server: { proxy: { '/api': `http://127.0.0.1:${serverPort}` } },
  test: {
    include: ['tests/**/*.test.ts', 'server/**/*.test.ts', 'shared/**/*.test.ts', 'cli/**/*.test.ts', 'solvers/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    // Two cores on CI: keep parallelism modest so process-level tests do not starve.
    maxWorkers: 2,
  },
});
