// End-to-end tests: the built browser mode driven by the system Chromium. Run apart from the
// unit tests (`npm run test:e2e`) because they need the built server and renderer.
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/e2e/**/*.e2e.ts'],
    testTimeout: 180_000,
    hookTimeout: 300_000,
    pool: 'forks',
    // One test file at a time: each runs its own server and browser on a 2-core machine.
    fileParallelism: false,
    reporters: ['default'],
  },
});
