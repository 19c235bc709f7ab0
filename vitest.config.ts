import { fileURLToPath } from "node:url";
import { defineConfig } from "vitest/config";

export default defineConfig({
  resolve: {
    alias: { "@": fileURLToPath(new URL(".", import.meta.url)) },
  },
  test: {
    include: ["tests/**/*.test.ts"],
    environment: "node",
    pool: "forks",
    // Migrations and worker-thread entry points are TypeScript: load them through tsx.
    execArgv: ["--import", "tsx"],
    testTimeout: 120_000,
    hookTimeout: 120_000,
  },
});
