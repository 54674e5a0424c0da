import { defineConfig } from "vitest/config";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";

const apiPort = Number(process.env.PLATEN_PORT ?? 5480);

export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: {
    outDir: "dist",
    emptyOutDir: true,
    sourcemap: true,
    rolldownOptions: {
      output: {
        // Libraries change less often than the app: separate chunks stay cached across releases.
        codeSplitting: {
          groups: [
            {
              name: "react",
              test: /node_modules[\\/](react|react-dom|react-router|react-router-dom|scheduler)[\\/]/,
              priority: 20,
            },
            { name: "data", test: /node_modules[\\/](@tanstack|zod)[\\/]/, priority: 15 },
            { name: "vendor", test: /node_modules[\\/].*\.[cm]?js$/, priority: 10 },
          ],
        },
      },
    },
  },
  server: {
    port: 5173,
    host: "127.0.0.1",
    proxy: { "/api": { target: `http://127.0.0.1:${apiPort}`, changeOrigin: false } },
  },
  test: {
    include: ["tests/**/*.test.ts"],
    globalSetup: ["tests/setup/global.ts"],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    // A poll waits for the app, not a clock: on a busy two-core machine a page can take
    // seconds to follow a key press, so give polls room before calling it a failure.
    expect: { poll: { timeout: 15_000, interval: 50 } },
    // Two cores: run files two at a time; each file gets its own database.
    pool: "forks",
    maxWorkers: 2,
    fileParallelism: true,
  },
});
