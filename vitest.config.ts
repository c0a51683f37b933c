import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    // Tests exercise the TypeScript sources: programs they spawn (bin/fleetwright.js) run
    // through tsx even when a current build exists (build/fresh.js). test/build.test.ts
    // runs the build itself.
    env: { FLEETWRIGHT_BUILD: 'off' },
  },
});
