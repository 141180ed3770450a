import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

export default defineConfig({
  resolve: { alias: { "@": fileURLToPath(new URL("./", import.meta.url)) } },
  test: {
    include: ["test/**/*.test.ts"],
    exclude: ["test/e2e/**", "node_modules/**"],
    environment: "node",
    testTimeout: 60_000,
    hookTimeout: 120_000,
    // Database suites create their own throwaway databases; files still run in parallel.
    pool: "forks",
  },
});
