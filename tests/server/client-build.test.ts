/*
 * What the built client ships (the build of `npm test`, or STRANDSIGHT_CLIENT_DIST): React Router's
 * production build, not the development build its package points every bundler at
 * (vite.config.ts, reactRouterProduction).
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";

const dist = path.resolve(process.env.STRANDSIGHT_CLIENT_DIST ?? "dist");
const scripts = () =>
  fs
    .readdirSync(path.join(dist, "assets"))
    .filter((f) => f.endsWith(".js"))
    .map((f) => fs.readFileSync(path.join(dist, "assets", f), "utf8"));

describe("the built client", () => {
  it("when the client is built, then it holds React Router's production build: its error page is there, its developer-only warnings are not", () => {
    expect(fs.existsSync(path.join(dist, "assets")), `no built client in ${dist}: run \`npm run build\` first (npm test does)`).toBe(true);
    const all = scripts();
    // In both builds: the router's own error page (so the router is in the scripts at all).
    expect(all.filter((s) => s.includes("Unexpected Application Error!"))).toHaveLength(1);
    // Only in the development build (react-router/dist/development, ENABLE_DEV_WARNINGS = true).
    expect(all.filter((s) => s.includes("Hey developer") || s.includes("No routes matched location"))).toEqual([]);
  });
});
