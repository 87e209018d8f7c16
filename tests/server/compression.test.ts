import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import zlib from "node:zlib";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { CLIENT_DIST } from "../../server/app";
import { createScreenPages } from "../../server/lib/screen-preload";
import { screenFor } from "../../shared/screens";
import { listenTestApp, type ListeningApp } from "../helpers/listening-app";
import { readManifest } from "../helpers/published-build";

/**
 * Every text file of the built client goes out compressed once at build (.br and .gz beside it,
 * vite.config.ts) to the browsers that accept it, and plain to the others — the same bytes once
 * decoded, the cache headers as before. Runs on a copy of the build (without source maps), so that
 * a test may change a file in place the way a hand-patched deployment does.
 */
const published = await vi.hoisted(async () => (await import("../helpers/published-build")).publishBuildCopy("strandsight-compression-"));

let app: ListeningApp;
let port: number;
const signIn = (role: string) => app.signIn(role);
beforeAll(async () => {
  app = await listenTestApp();
  port = app.port;
});
afterAll(async () => {
  await app?.close();
  fs.rmSync(published, { recursive: true, force: true });
});

/**
 * The answer as it travels, through plain node:http (supertest would decode it): no Accept-Encoding
 * header at all when `acceptEncoding` is undefined.
 */
function getRaw(url: string, acceptEncoding?: string, cookie?: string) {
  const headers: Record<string, string> = {};
  if (acceptEncoding !== undefined) headers["accept-encoding"] = acceptEncoding;
  if (cookie) headers.cookie = cookie;
  return new Promise<{ res: { status: number; headers: http.IncomingHttpHeaders }; body: Buffer }>((resolve, reject) => {
    http
      .get({ host: "127.0.0.1", port, path: url, headers }, (res) => {
        const chunks: Buffer[] = [];
        res.on("data", (c: Buffer) => chunks.push(c));
        res.on("end", () => resolve({ res: { status: res.statusCode!, headers: res.headers }, body: Buffer.concat(chunks) }));
      })
      .on("error", reject);
  });
}

function decode(body: Buffer, encoding: string | undefined): Buffer {
  if (encoding === "br") return zlib.brotliDecompressSync(body);
  if (encoding === "gzip") return zlib.gunzipSync(body);
  return body;
}

const manifest = () => readManifest(CLIENT_DIST);

describe("the built client's files, compressed", () => {
  it("when the build is made, then every script, style sheet and page has a .br and a .gz holding its exact bytes, and the service worker precaches the plain files only", () => {
    expect(CLIENT_DIST).toBe(published);
    const files = fs
      .readdirSync(path.join(CLIENT_DIST, "assets"))
      .filter((f) => /\.(js|css)$/.test(f))
      .map((f) => `assets/${f}`);
    files.push("index.html", "sw.js", "manifest.webmanifest", ...fs.readdirSync(CLIENT_DIST).filter((f) => /^workbox-[\w-]+\.js$/.test(f)));
    expect(files.length).toBeGreaterThan(20);
    for (const f of files) {
      const plain = fs.readFileSync(path.join(CLIENT_DIST, f));
      expect(zlib.brotliDecompressSync(fs.readFileSync(path.join(CLIENT_DIST, `${f}.br`))).equals(plain), `${f}.br`).toBe(true);
      expect(zlib.gunzipSync(fs.readFileSync(path.join(CLIENT_DIST, `${f}.gz`))).equals(plain), `${f}.gz`).toBe(true);
    }
    const precached = [...fs.readFileSync(path.join(CLIENT_DIST, "sw.js"), "utf8").matchAll(/url:"([^"]+)"/g)].map((m) => m[1]!);
    expect(precached).toContain("index.html");
    expect(precached.filter((u) => /\.(br|gz)$/.test(u))).toEqual([]);
  });

  // What each file is asked as, and the Cache-Control it has always had.
  const entry = () => Object.values(manifest()).find((m) => m.isEntry)!;
  const cases: { what: string; url: () => string; file: () => string; page?: string; type: RegExp; cache: string }[] = [
    {
      what: "the entry script",
      url: () => `/${entry().file}`,
      file: () => entry().file,
      type: /^text\/javascript/,
      cache: "public, max-age=31536000, immutable",
    },
    {
      what: "the style sheet",
      url: () => `/${entry().css![0]}`,
      file: () => entry().css![0]!,
      type: /^text\/css/,
      cache: "public, max-age=31536000, immutable",
    },
    // index.html with the screen's code named in it (tests/server/screen-pages.test.ts checks what is added).
    {
      what: "index.html for a screen's address",
      url: () => "/reports/overview?period=month",
      file: () => "index.html",
      page: "/reports/overview",
      type: /^text\/html/,
      cache: "no-cache",
    },
    { what: "index.html itself", url: () => "/index.html", file: () => "index.html", type: /^text\/html/, cache: "no-cache" },
    { what: "the service worker", url: () => "/sw.js", file: () => "sw.js", type: /^text\/javascript/, cache: "no-cache" },
    {
      what: "the app manifest",
      url: () => "/manifest.webmanifest",
      file: () => "manifest.webmanifest",
      type: /^application\/manifest\+json/,
      cache: "no-cache",
    },
    { what: "the icon (svg)", url: () => "/icon.svg", file: () => "icon.svg", type: /^image\/svg\+xml/, cache: "public, max-age=3600" },
  ];
  for (const c of cases) {
    for (const [accept, expected] of [
      ["br, gzip, deflate", "br"],
      ["gzip, deflate", "gzip"],
      ["identity", undefined],
      [undefined, undefined],
    ] as const) {
      it(`when ${c.what} is asked with Accept-Encoding ${accept ?? "(none)"}, then it comes ${expected ?? "plain"}, the same bytes once decoded, with its cache headers`, async () => {
        const { res, body } = await getRaw(c.url(), accept);
        expect(res.status).toBe(200);
        expect(res.headers["content-encoding"]).toBe(expected);
        expect(res.headers["content-type"]).toMatch(c.type);
        expect(res.headers["cache-control"]).toBe(c.cache);
        expect(res.headers["vary"]).toMatch(/Accept-Encoding/i);
        expect(Number(res.headers["content-length"])).toBe(body.length);
        const plain = c.page ? createScreenPages(CLIENT_DIST).pageFor(screenFor(c.page)).html : fs.readFileSync(path.join(CLIENT_DIST, c.file()));
        expect(decode(body, expected).equals(plain)).toBe(true);
      });
    }
  }

  it("when an image is asked by a browser that accepts br, then it comes as it is (already compressed), with the hour's cache", async () => {
    const { res, body } = await getRaw("/icon-192.png", "br, gzip");
    expect(res.status).toBe(200);
    expect(res.headers["content-encoding"]).toBeUndefined();
    expect(res.headers["cache-control"]).toBe("public, max-age=3600");
    expect(body.equals(fs.readFileSync(path.join(CLIENT_DIST, "icon-192.png")))).toBe(true);
  });

  it("when a script that does not exist is asked, then the answer is still 404", async () => {
    const { res } = await getRaw("/assets/no-such-file-0000.js", "br, gzip");
    expect(res.status).toBe(404);
  });

  it("when the service worker is changed in place on the running server, then browsers get the new file, never the old compressed copy", async () => {
    const sw = path.join(CLIENT_DIST, "sw.js");
    const before = await getRaw("/sw.js", "br, gzip");
    expect(before.res.headers["content-encoding"]).toBe("br");
    fs.appendFileSync(sw, "\n// the next version\n");
    const after = await getRaw("/sw.js", "br, gzip");
    expect(after.res.status).toBe(200);
    expect(after.res.headers["content-encoding"]).toBeUndefined();
    expect(after.res.headers["cache-control"]).toBe("no-cache");
    expect(after.body.equals(fs.readFileSync(sw))).toBe(true);
    // Its copies rebuilt (as the next build writes them): compressed again.
    fs.writeFileSync(`${sw}.br`, zlib.brotliCompressSync(fs.readFileSync(sw)));
    const again = await getRaw("/sw.js", "br, gzip");
    expect(again.res.headers["content-encoding"]).toBe("br");
    expect(zlib.brotliDecompressSync(again.body).equals(fs.readFileSync(sw))).toBe(true);
  });
});

describe("API answers, compressed", () => {
  it("when a signed-in user reads an answer large enough to gain from it, then it comes compressed and decodes to the same JSON", async () => {
    const cookie = await signIn("quality");
    const plain = await getRaw("/api/openapi.json", "identity", cookie);
    expect(plain.res.status).toBe(200);
    expect(plain.res.headers["content-encoding"]).toBeUndefined();
    for (const [accept, coding] of [
      ["gzip", "gzip"],
      ["br", "br"],
    ] as const) {
      const packed = await getRaw("/api/openapi.json", accept, cookie);
      expect(packed.res.status).toBe(200);
      expect(packed.res.headers["content-encoding"]).toBe(coding);
      expect(packed.res.headers["vary"]).toMatch(/Accept-Encoding/i);
      expect(JSON.parse(decode(packed.body, coding).toString("utf8"))).toEqual(JSON.parse(plain.body.toString("utf8")));
      expect(packed.body.length).toBeLessThan(plain.body.length / 3);
    }
  });

  it("when a small answer is read, then it is sent as it is (not worth compressing)", async () => {
    const cookie = await signIn("quality");
    const { res, body } = await getRaw("/api/me", "gzip, br", cookie);
    expect(res.status).toBe(200);
    expect(res.headers["content-encoding"]).toBeUndefined();
    expect(JSON.parse(body.toString("utf8")).roles).toContain("quality");
  });

  it("when a write is answered, then it is never compressed (the write path stays as lean as it was)", async () => {
    const cookie = await signIn("quality");
    const res = await fetch(`http://127.0.0.1:${port}/api/auth/sign-out`, {
      method: "POST",
      headers: { "content-type": "application/json", origin: app.t.env.BETTER_AUTH_URL, cookie, "accept-encoding": "gzip, br" },
      body: "{}",
    });
    expect(res.status).toBe(200);
    expect(res.headers.get("content-encoding")).toBeNull();
  });
});
