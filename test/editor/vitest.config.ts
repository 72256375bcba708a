import { defineConfig } from 'vitest/config';

// The workbench end-to-end test: `npm run test:editor`. One file, one fork, long hooks (the first
// run installs code-server, which builds native modules).
export default defineConfig({
  test: {
    include: ['test/editor/**/*.test.ts'],
    testTimeout: 180_000,
    hookTimeout: 900_000,
    pool: 'forks',
    fileParallelism: false,
    maxWorkers: 1,
    reporters: ['default'],
  },
});
