import { defineConfig } from "vite";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";

// The portal is served by the Express server in production (web/dist); in development Vite
// proxies /api to it, so the browser only ever talks to one origin on loopback.
export default defineConfig(({ command }) => {
  // `npm test` runs with NODE_ENV=test, which would otherwise build React's development bundle (and the
  // JSX transform with it); the shipped portal is the production one whoever builds it.
  if (command === "build") process.env.NODE_ENV = "production";
  return {
    plugins: [react(), tailwindcss()],
    server: {
      host: "127.0.0.1",
      proxy: { "/api": process.env.TIDEMARK_API ?? "http://127.0.0.1:8080" },
    },
    build: { outDir: "dist", sourcemap: false },
  };
});
