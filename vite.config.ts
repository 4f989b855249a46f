import { fileURLToPath } from "node:url";
import { defineConfig } from "vite";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";
import { writeSourceStamp } from "./server/clientBuild";

// The API server (server/index.ts) listens here; in dev the client is served by Vite
// and forwards API calls and the live socket so cookies stay same-origin.
const API_TARGET = "http://127.0.0.1:8080";

export default defineConfig({
  // `@shared/…` is shared/ (tsconfig.json paths; vitest.config.ts says the same for the tests).
  resolve: { alias: { "@shared": fileURLToPath(new URL("./shared", import.meta.url)) } },
  plugins: [
    react(),
    tailwindcss(),
    // Any build (npm run build too) records what it was built from, so `npm start` can skip
    // building again when nothing changed (server/clientBuild.ts).
    { name: "blocklight-source-stamp", apply: "build", closeBundle: () => writeSourceStamp(process.cwd()) },
  ],
  build: {
    outDir: "dist",
    emptyOutDir: true,
    // Routes are lazy chunks; a warning above this size means something heavy leaked into
    // the first load.
    chunkSizeWarningLimit: 400,
  },
  server: {
    proxy: {
      "/api": { target: API_TARGET, changeOrigin: false },
      "/socket.io": { target: API_TARGET, ws: true, changeOrigin: false },
    },
  },
});
