import path from 'node:path';
import { defineConfig } from 'vitest/config';

const alias = { '@': path.resolve(import.meta.dirname) };

// Two projects: `unit` needs nothing running; `integration` talks to the MariaDB, S3, Redis and
// SMTP services that scripts/test.sh starts on the test ports (see scripts/services.ts).
export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: {
          name: 'unit',
          include: ['tests/unit/**/*.test.ts'],
          environment: 'node',
          testTimeout: 60_000,
        },
      },
      {
        resolve: { alias },
        test: {
          name: 'integration',
          include: ['tests/integration/**/*.test.ts'],
          environment: 'node',
          testTimeout: 120_000,
          hookTimeout: 120_000,
          fileParallelism: false,
          setupFiles: ['tests/integration/setup.ts'],
        },
      },
    ],
  },
});
