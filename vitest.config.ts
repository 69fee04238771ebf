import { defaultServerConditions } from 'vite';
import { defineConfig } from 'vitest/config';

// Tests import the workspace packages' TypeScript sources: the `rhofield-source` export condition
// (packages/*/package.json) picks src/ over dist/, so no build is needed for unit tests.
const conditions = ['rhofield-source', ...defaultServerConditions];

export default defineConfig({
  resolve: { conditions },
  ssr: { resolve: { conditions } },
  test: {
    include: ['tests/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
