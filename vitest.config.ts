import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    testTimeout: 60_000, // ms: the browser and process tests start real servers
    hookTimeout: 120_000, // ms
  },
});
