import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

/** End-to-end tests: the production build in headless Chromium. One file at a time: each starts a server. */
export default defineConfig({
  resolve: { alias: { "@": fileURLToPath(new URL("./", import.meta.url)) } },
  test: {
    include: ["test/e2e/**/*.e2e.test.ts"],
    environment: "node",
    testTimeout: 120_000,
    hookTimeout: 240_000,
    fileParallelism: false,
  },
});
