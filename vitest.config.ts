import { fileURLToPath } from "node:url";
import { defineConfig } from "vitest/config";
import react from "@vitejs/plugin-react";

// One run covers every kind of test. Server and browser tests share one throwaway
// PostgreSQL cluster started by the global setup; each test file makes its own database.
export default defineConfig({
  plugins: [react()],
  // `@shared/…` is shared/, as in tsconfig.json paths and vite.config.ts.
  resolve: { alias: { "@shared": fileURLToPath(new URL("./shared", import.meta.url)) } },
  test: {
    include: ["tests/**/*.test.ts", "tests/**/*.test.tsx"],
    globalSetup: ["tests/support/globalSetup.ts"],
    testTimeout: 30_000,
    hookTimeout: 120_000,
    pool: "forks",
    reporters: ["default"],
  },
});
