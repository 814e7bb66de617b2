import { defineConfig } from "vitest/config";
import react from "@vitejs/plugin-react";

// One config, four projects: each folder of tests/ has the environment it needs.
// Server and e2e tests need DATABASE_URL from the harness (scripts/test.mjs starts a throwaway cluster).
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: "unit",
          include: ["tests/shared/**/*.test.ts", "tests/cli/**/*.test.ts", "tests/*.test.ts"],
          environment: "node",
          testTimeout: 60_000,
        },
      },
      {
        test: {
          name: "server",
          include: ["tests/server/**/*.test.ts"],
          environment: "node",
          testTimeout: 60_000,
          hookTimeout: 120_000,
        },
      },
      {
        plugins: [react()],
        test: {
          name: "web",
          include: ["tests/web/**/*.test.{ts,tsx}"],
          environment: "jsdom",
          setupFiles: ["tests/web/setup.ts"],
        },
      },
      {
        test: {
          name: "e2e",
          include: ["tests/e2e/**/*.test.ts"],
          environment: "node",
          testTimeout: 120_000,
          hookTimeout: 300_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
