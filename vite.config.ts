/// <reference types="vitest/config" />
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import { defineConfig, type Plugin } from "vite";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";
import { VitePWA } from "vite-plugin-pwa";
import { compression, defineAlgorithm } from "vite-plugin-compression2";

const apiPort = process.env.PORT ?? "3000";

/**
 * Every text asset leaves the build also as .gz and .br beside it, compressed once at the highest
 * levels; the server (express-static-gzip in server/app.ts) sends the one the browser accepts. Images
 * and woff2 fonts are compressed already. Source maps stay plain: only a developer opens them.
 */
const COMPRESSED = /\.(js|mjs|css|html|svg|json|webmanifest)$/;
const GZIP = defineAlgorithm("gzip", { level: zlib.constants.Z_BEST_COMPRESSION });
const BROTLI = defineAlgorithm("brotliCompress", { params: { [zlib.constants.BROTLI_PARAM_QUALITY]: zlib.constants.BROTLI_MAX_QUALITY } });

/**
 * The service worker and its Workbox runtime are written by vite-plugin-pwa after the bundle is
 * closed, where vite-plugin-compression2 no longer looks (it compresses the bundle and public/ only).
 * This last step compresses those few files the same way; it is ours because no plugin covers files
 * another plugin writes at closeBundle.
 */
function compressServiceWorker(): Plugin {
  let outDir = "";
  return {
    name: "strandsight:compress-service-worker",
    apply: "build",
    enforce: "post",
    configResolved(config) {
      outDir = path.resolve(config.root, config.build.outDir);
    },
    closeBundle: {
      order: "post",
      sequential: true,
      handler() {
        for (const name of fs.readdirSync(outDir)) {
          if (!/^(sw\.js|workbox-[\w-]+\.js|manifest\.webmanifest)$/.test(name)) continue;
          const file = path.join(outDir, name);
          const plain = fs.readFileSync(file);
          const gz = zlib.gzipSync(plain, { level: zlib.constants.Z_BEST_COMPRESSION });
          const br = zlib.brotliCompressSync(plain, { params: { [zlib.constants.BROTLI_PARAM_QUALITY]: zlib.constants.BROTLI_MAX_QUALITY } });
          if (gz.length < plain.length) fs.writeFileSync(`${file}.gz`, gz);
          if (br.length < plain.length) fs.writeFileSync(`${file}.br`, br);
        }
      },
    },
  };
}

/**
 * React Router's package exports point at its development build in every mode (its open issue
 * remix-run/react-router#14102): dev-only warnings and checks ship with the app. A build resolves
 * "react-router" and "react-router/dom" to the production build the package ships beside it.
 */
function reactRouterProduction(): Plugin {
  const dir = path.resolve(import.meta.dirname, "node_modules/react-router/dist/production");
  return {
    name: "strandsight:react-router-production",
    apply: "build",
    config: () => ({
      resolve: {
        alias: [
          { find: /^react-router$/, replacement: path.join(dir, "index.mjs") },
          { find: /^react-router\/dom$/, replacement: path.join(dir, "dom-export.mjs") },
        ],
      },
    }),
  };
}

/**
 * `vite build` (and so `npm start`) prints warnings and errors only, then one line of what it built,
 * instead of a line per file: with the .gz and .br copies that list runs to hundreds of lines before
 * the server's own. `vite build --logLevel info` lists every file again.
 */
function buildSummary(): Plugin {
  let outDir = "";
  let started = 0;
  const kB = (n: number) => (n >= 1024 * 1024 ? `${(n / 1024 / 1024).toFixed(2)} MB` : `${Math.round(n / 1024)} kB`);
  return {
    name: "strandsight:build-summary",
    apply: "build",
    enforce: "post",
    config(config) {
      if (!config.logLevel) return { logLevel: "warn" };
    },
    configResolved(config) {
      outDir = path.resolve(config.root, config.build.outDir);
    },
    buildStart() {
      started = performance.now();
    },
    closeBundle: {
      // After the service worker is written and compressed (the plugins before this one).
      order: "post",
      sequential: true,
      handler() {
        const groups = { script: { n: 0, bytes: 0 }, stylesheet: { n: 0, bytes: 0 }, "font file": { n: 0, bytes: 0 }, "other file": { n: 0, bytes: 0 } };
        let copies = 0;
        for (const entry of fs.readdirSync(outDir, { recursive: true, withFileTypes: true })) {
          if (!entry.isFile()) continue;
          const file = path.join(entry.parentPath, entry.name);
          if (path.relative(outDir, file).startsWith(".vite")) continue;
          if (/\.(gz|br|map)$/.test(entry.name)) {
            copies++;
            continue;
          }
          const kind = /\.m?js$/.test(entry.name)
            ? "script"
            : entry.name.endsWith(".css")
              ? "stylesheet"
              : /\.woff2?$/.test(entry.name)
                ? "font file"
                : "other file";
          groups[kind].n++;
          groups[kind].bytes += fs.statSync(file).size;
        }
        // Workbox's generated worker lists its precache as {url:"…",revision:…} entries.
        const sw = path.join(outDir, "sw.js");
        const precached = fs.existsSync(sw) ? (fs.readFileSync(sw, "utf8").match(/\{url:"/g)?.length ?? 0) : 0;
        const parts = Object.entries(groups).map(([kind, { n, bytes }]) => `${n} ${kind}${n === 1 ? "" : "s"} (${kB(bytes)})`);
        const where = path.relative(process.cwd(), outDir);
        console.log(
          `Client built in ${((performance.now() - started) / 1000).toFixed(1)} s into ${where.startsWith("..") ? outDir : where}/: ${parts.join(", ")}, ` +
            `and ${copies} source maps and .gz/.br copies${precached ? `; the service worker precaches ${precached} files` : ""}.`,
        );
      },
    },
  };
}

export default defineConfig({
  plugins: [
    react(),
    reactRouterProduction(),
    tailwindcss(),
    // The service worker: after one online visit the app starts, reloads and navigates with no
    // network. generateSW (not injectManifest): all it does is precache the build and answer
    // navigations with index.html, which Workbox's generated worker does with no code of ours.
    VitePWA({
      strategies: "generateSW",
      // A new version waits until the person taps "Reload" (src/main.tsx): never under a half-filled form.
      registerType: "prompt",
      // Registered from src/main.tsx through virtual:pwa-register (the CSP allows no inline script).
      injectRegister: false,
      manifestFilename: "manifest.webmanifest",
      includeAssets: ["icon.svg"],
      manifest: {
        id: "/",
        name: "Strandsight",
        short_name: "Strandsight",
        description: "Slab defects, heats and casting conditions — the yard's logging screen works without a network.",
        start_url: "/",
        scope: "/",
        display: "standalone",
        // Tablets are used upright at the slab and on their side at a desk.
        orientation: "any",
        // --color-ink-900 (the header) and --color-paper (the page) in src/index.css.
        theme_color: "#14202b",
        background_color: "#f1efea",
        icons: [
          { src: "/icon-192.png", sizes: "192x192", type: "image/png", purpose: "any" },
          { src: "/icon-512.png", sizes: "512x512", type: "image/png", purpose: "any" },
          { src: "/icon-maskable-512.png", sizes: "512x512", type: "image/png", purpose: "maskable" },
        ],
      },
      workbox: {
        // Every route's chunk and the CSS (the manifest and its icons are added by the plugin), and
        // every font file the build ships (src/fonts.css: Noto Sans, Latin, Latin Extended and
        // Greek, woff2 only), so a screen shown offline has the glyphs it had online. Source maps stay out.
        globPatterns: ["**/*.{js,css,html}", "**/noto-sans-*.woff2"],
        globIgnores: ["**/*.map", ".vite/**"],
        // The chart and table code is large but must open offline too.
        maximumFileSizeToCacheInBytes: 3 * 1024 * 1024,
        // Hashed file names already change with their content: no cache-busting query needed.
        dontCacheBustURLsMatching: /^assets\//,
        navigateFallback: "/index.html",
        // The server answers /api itself (signed-in data, photo files, exports: never from a cache).
        navigateFallbackDenylist: [/^\/api(\/|$)/],
        // No runtimeCaching: API answers are never cached here; the yard's data for offline use
        // lives in IndexedDB (the yard sync and the outbox).
        cleanupOutdatedCaches: true,
        // The first visit's page is taken over at once, so its later screens load from the precache
        // too; an update still waits for "Reload" (no skipWaiting).
        clientsClaim: true,
        skipWaiting: false,
        sourcemap: false,
      },
    }),
    // After the PWA plugin: the precache lists the plain files only (its globPatterns end in
    // .js/.css/.html, never .gz/.br); the worker fetches them through the server like the page does,
    // and the browser asks for and decodes br/gzip on those requests itself.
    compression({ algorithms: [GZIP, BROTLI], include: COMPRESSED, exclude: /\.map$/, logLevel: "silent" }),
    compressServiceWorker(),
    buildSummary(),
  ],
  resolve: {
    alias: {
      "@": path.resolve(import.meta.dirname, "src"),
      "@shared": path.resolve(import.meta.dirname, "shared"),
    },
  },
  server: {
    port: 5173,
    // `npm run dev`: the API runs beside Vite; the browser talks to Vite only.
    proxy: { "/api": { target: `http://localhost:${apiPort}`, changeOrigin: false } },
  },
  build: {
    outDir: "dist",
    sourcemap: true,
    chunkSizeWarningLimit: 700,
    // Rolldown warns when plugins take much of the build's time; ours do by design (Tailwind, brotli at
    // its highest level, once per build), and on a busy machine the warning filled ten lines of `npm start`.
    rolldownOptions: {
      checks: { bundlerTimings: false },
      output: {
        codeSplitting: {
          groups: [
            // The API client, zod and the shared schemas every screen's first view reads (the session,
            // the plant's description, a report's question and answer): one chunk beside the first
            // script, as the client and zod were before.
            {
              name: "schemas",
              test: /[\\/](node_modules[\\/]zod[\\/]|src[\\/]lib[\\/]api-client\.ts$|shared[\\/](query-string|roles|domain|variables|api[\\/](users|risk|plant|sign-in))\.ts$)/,
            },
            // The schemas of records (defects, heats and slabs), loaded with the first answer that
            // needs them (src/lib/record-schemas.ts): one chunk, not one per module.
            { name: "record-schemas", test: /[\\/](src[\\/]lib[\\/]record-schemas|shared[\\/]api[\\/](defects|heats))\.ts$/ },
          ],
        },
      },
    },
    // The route → chunk map, for `npm run bench` (bundle size of each route).
    manifest: true,
  },
  test: {
    include: ["tests/**/*.test.ts", "tests/**/*.test.tsx"],
    environment: "node",
    testTimeout: 30_000,
    hookTimeout: 120_000,
    pool: "forks",
    fileParallelism: true,
  },
});
