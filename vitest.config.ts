import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

const alias = { '@': fileURLToPath(new URL('./src', import.meta.url)) };

// Two projects: the pure unit tests run in parallel; integration and browser tests share
// one PostgreSQL, s3rver and SMTP sink started by scripts/test.sh, so they run one file at a time.
export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: {
          name: 'unit',
          environment: 'node',
          include: ['src/**/__tests__/**/*.test.ts', 'tests/unit/**/*.test.ts'],
          testTimeout: 60_000,
          // Knobs read here, handed to tests with inject() (tests/support/provided.d.ts): src/ reads no environment
          // outside src/lib/config.ts. FUZZ_CASES=50000 for a long fuzz run (src/lib/imaging/__tests__/fuzz.test.ts).
          provide: { fuzzCases: Number(process.env.FUZZ_CASES ?? 5000) },
        },
      },
      {
        resolve: { alias },
        test: {
          name: 'integration',
          environment: 'node',
          include: ['tests/integration/**/*.test.ts', 'tests/e2e/**/*.test.ts'],
          fileParallelism: false,
          testTimeout: 120_000,
          hookTimeout: 180_000,
        },
      },
    ],
  },
});
