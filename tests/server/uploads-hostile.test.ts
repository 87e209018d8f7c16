import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { execFileSync } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import { Writable } from "node:stream";
import type { AddressInfo } from "node:net";
import request from "supertest";
import sharp from "sharp";
import { pino } from "pino";
import { createApp } from "../../server/app";
import express from "express";
import { diskUpload, INCOMING_DIR, takeUploadSlot, UPLOADS_PER_USER, uploadsInFlight } from "../../server/middleware/uploads";
import { ATTACHMENT_MAX_PER_RECORD, ATTACHMENT_MAX_PER_USER_HOUR } from "../../server/services/attachments.service";
import { PHOTO_DECODE_QUEUE_MAX, PHOTO_MAX_PIXELS, photoDecodeState } from "../../server/services/photos.service";
import { createUser } from "../../server/services/users.service";
import { PHOTO_MAX_FILES, PHOTO_MAX_PER_DEFECT, PHOTO_MAX_PER_USER_HOUR } from "../../shared/api/defects";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

/**
 * Hostile uploads against the real app on a real port: refusals answered before the body is read
 * (raw HTTP, so the test controls how much of the body has been sent), the per-person limit on
 * uploads in flight, entries that change while their photos arrive, the photo caps, big-pixel
 * photos decoded through the bounded queue, file names, and a store that cannot be written.
 * The memory and latency figures are printed at the end.
 */

let t: TestApp;
let server: http.Server;
let base: string;
let O: string;
const cookies: Record<string, string> = {};
const ids: Record<string, string> = {};
const figures: string[] = [];
let slabId: string;
let keyNo = 0;

const MB = 1024 * 1024;
const one = (sql: string, ...a: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...a) as any;

async function signIn(email: string) {
  const res = await fetch(`${base}/api/auth/sign-in/email`, {
    method: "POST",
    headers: { "content-type": "application/json", origin: O },
    body: JSON.stringify({ email, password: TEST_PASSWORD }),
  });
  if (res.status !== 200) throw new Error(`sign-in as ${email}: ${res.status}`);
  cookies[email] = res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
  ids[email] = one("select id from user where email = ?", email);
}

/** supertest against the listening server, as this person. */
const as = (email: string) => ({
  get: (p: string) => request(server).get(p).set("Cookie", cookies[email]!),
  post: (p: string) => request(server).post(p).set("Cookie", cookies[email]!).set("Origin", O),
  delete: (p: string) => request(server).delete(p).set("Cookie", cookies[email]!).set("Origin", O),
});

async function newDefect(email: string): Promise<number> {
  const res = await as(email)
    .post("/api/defects")
    .send({
      slab_id: slabId,
      type_code: "SLG",
      face: "inner",
      position_along_mm: 1000,
      position_across_mm: 400,
      severity: 2,
      disposition: "scarf",
      client_key: `hostile-upload-${++keyNo}`,
    });
  if (res.status !== 201) throw new Error(`defect: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id;
}

// ---------------------------------------------------------------------------------------------
// A multipart request whose body the test sends piece by piece
// ---------------------------------------------------------------------------------------------

interface Part {
  field: string;
  filename?: string;
  /** The content, or `size` bytes of filler. */
  data?: Buffer;
  size?: number;
}
interface Answer {
  status: number;
  headers: http.IncomingHttpHeaders;
  body: any;
}

const FILLER = Buffer.alloc(MB, 0x41);

/**
 * Opens a POST with a multipart body of the given parts and a Content-Length for all of it, and
 * sends nothing yet: `send(n)` sends up to n bytes of the body (in order, minding backpressure),
 * `finish()` the rest. `answer` settles when the server answers, however much has been sent.
 */
function openUpload(urlPath: string, email: string, parts: Part[]) {
  const boundary = `----strandsight-test-${Math.random().toString(16).slice(2)}`;
  const segments: (Buffer | number)[] = [];
  for (const p of parts) {
    const disposition = p.filename !== undefined ? `form-data; name="${p.field}"; filename="${p.filename}"` : `form-data; name="${p.field}"`;
    segments.push(
      Buffer.from(
        `--${boundary}\r\nContent-Disposition: ${disposition}\r\n${p.filename !== undefined ? "Content-Type: application/octet-stream\r\n" : ""}\r\n`,
        "utf8",
      ),
    );
    segments.push(p.data ?? p.size!);
    segments.push(Buffer.from("\r\n"));
  }
  segments.push(Buffer.from(`--${boundary}--\r\n`));
  const total = segments.reduce<number>((n, s) => n + (typeof s === "number" ? s : s.length), 0);
  const req = http.request(`${base}${urlPath}`, {
    method: "POST",
    // Kept alive, as browsers and tablets do: the server then reads and discards what it refused.
    agent: new http.Agent({ keepAlive: true, maxSockets: 1 }),
    headers: { cookie: cookies[email]!, origin: O, "content-type": `multipart/form-data; boundary=${boundary}`, "content-length": String(total) },
  });
  req.on("error", () => undefined); // the server may close the connection once it has answered
  let sent = 0;
  let segment = 0;
  let offset = 0;
  let answered = false;
  const answer = new Promise<Answer>((resolve, reject) => {
    req.on("response", (res) => {
      answered = true;
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => {
        const text = Buffer.concat(chunks).toString("utf8");
        let body: unknown = text;
        try {
          body = JSON.parse(text);
        } catch {
          /* not JSON */
        }
        resolve({ status: res.statusCode!, headers: res.headers, body });
      });
      res.on("error", reject);
    });
  });
  async function send(limit: number) {
    while (sent < limit && segment < segments.length) {
      const s = segments[segment]!;
      const len = typeof s === "number" ? s : s.length;
      const n = Math.min(len - offset, limit - sent, MB);
      const chunk = typeof s === "number" ? FILLER.subarray(0, n) : s.subarray(offset, offset + n);
      const ok = req.write(chunk);
      sent += n;
      offset += n;
      if (offset === len) (segment++, (offset = 0));
      if (!ok) await new Promise<void>((resolve) => req.once("drain", resolve).once("close", resolve));
      if (req.destroyed) return;
    }
  }
  return {
    total,
    answer,
    get sent() {
      return sent;
    },
    get answered() {
      return answered;
    },
    send,
    async finish() {
      await send(total);
      req.end();
      return answer;
    },
    abort: () => req.destroy(),
  };
}

/** Waits (by polling, bounded) until the condition holds; fails with what it last saw. */
async function until(what: string, check: () => boolean, tries = 500) {
  for (let i = 0; i < tries; i++) {
    if (check()) return;
    await new Promise((r) => setTimeout(r, 20));
  }
  throw new Error(`never happened: ${what}`);
}

/** Temporary upload files this test process (the app runs in it) left in the incoming folder. */
const incomingLeft = () => (fs.existsSync(INCOMING_DIR) ? fs.readdirSync(INCOMING_DIR).filter((f) => f.startsWith(`${process.pid}-`)) : []);
const photoRows = (defectId: number) => one("select count(*) from defect_photos where defect_id = ?", defectId) as number;
const photoFiles = () => {
  const root = path.join(t.env.UPLOAD_DIR, "photos");
  return fs.existsSync(root) ? fs.readdirSync(root).flatMap((d) => fs.readdirSync(path.join(root, d))).length : 0;
};
const pngOf = (seed: number, size = 16) =>
  sharp({ create: { width: size, height: size, channels: 3, background: { r: seed % 256, g: (seed * 7) % 256, b: (seed * 13) % 256 } } })
    .png()
    .toBuffer();

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  O = t.env.BETTER_AUTH_URL;
  server = t.app.listen(0, "127.0.0.1");
  await new Promise<void>((resolve) => server.once("listening", () => resolve()));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  for (const n of [2, 3]) {
    await createUser(
      t.db,
      t.auth,
      { name: `Yard inspector ${n}`, email: `inspector${n}@demo.test`, roles: ["inspector"], password: TEST_PASSWORD },
      { actor: "test" },
    );
  }
  for (const role of ["inspector", "inspector2", "inspector3", "quality", "process", "claims", "admin"]) await signIn(`${role}@demo.test`);
  slabId = one("select slab_id from slabs order by id limit 1");
}, 120_000);

afterAll(async () => {
  if (server) {
    server.closeAllConnections();
    await new Promise<void>((resolve) => server.close(() => resolve()));
  }
  await t?.close();
  if (figures.length) console.log(["upload figures:", ...figures.map((f) => `  ${f}`)].join("\n"));
});

// ---------------------------------------------------------------------------------------------

describe("a refused upload is answered before its body is read", () => {
  it("when a photo or attachment upload of 10 × 24 MB is refused (not yours 403, no entry 404, closed investigation 409, no claim 404), then the answer arrives after the first megabyte, and no temporary file is left", async () => {
    const qualitysDefect = await newDefect("quality@demo.test");
    const heatNo = one("select heat_no from heats order by id limit 1");
    const inv = await as("process@demo.test")
      .post("/api/investigations")
      .send({ title: "Closed one", problemStatement: "An investigation that is closed at once.", heatNos: [heatNo] });
    expect(inv.status).toBe(201);
    const closed = await as("process@demo.test")
      .post(`/api/investigations/${inv.body.id}/close`)
      .send({ confirmedCause: "sen-clogging", closureNote: "Closed for the test." });
    expect(closed.status).toBe(200);
    const cases = [
      { who: "inspector@demo.test", url: `/api/defects/${qualitysDefect}/photos`, field: "photos", status: 403, code: "forbidden" },
      { who: "inspector@demo.test", url: "/api/defects/999999/photos", field: "photos", status: 404, code: "not_found" },
      { who: "process@demo.test", url: `/api/investigations/${inv.body.id}/attachments`, field: "files", status: 409, code: "conflict" },
      { who: "claims@demo.test", url: "/api/claims/999999/attachments", field: "files", status: 404, code: "not_found" },
    ];
    for (const c of cases) {
      const files = c.field === "photos" ? 10 : 5;
      const up = openUpload(
        c.url,
        c.who,
        Array.from({ length: files }, (_, i) => ({ field: c.field, filename: `big-${i}.jpg`, size: 24 * MB })),
      );
      await up.send(MB);
      // Nothing more is sent until the answer is in: with the body read first, it would never come.
      const answer = await up.answer;
      up.abort();
      expect({ url: c.url, status: answer.status, code: answer.body?.error?.code }).toEqual({ url: c.url, status: c.status, code: c.code });
      expect(typeof answer.body.error.message).toBe("string");
      expect(up.sent).toBe(MB);
      expect(up.total).toBeGreaterThan(files * 24 * MB);
    }
    await until("no temporary files left", () => incomingLeft().length === 0);
    expect(photoRows(qualitysDefect)).toBe(0);
  });

  it(
    "when six refused uploads of 10 × 24 MB each are sent at once, then each is answered after a few megabytes, the rest is never read, and the server's memory grows by less than 150 MB",
    { timeout: 120_000 },
    async () => {
      const target = await newDefect("quality@demo.test");
      const before = process.memoryUsage();
      let peakRss = before.rss;
      let peakHeap = before.heapUsed + before.external + before.arrayBuffers;
      const sampler = setInterval(() => {
        const m = process.memoryUsage();
        peakRss = Math.max(peakRss, m.rss);
        peakHeap = Math.max(peakHeap, m.heapUsed + m.external + m.arrayBuffers);
      }, 10);
      const started = Date.now();
      const uploads = Array.from({ length: 6 }, () =>
        openUpload(
          `/api/defects/${target}/photos`,
          "inspector@demo.test",
          Array.from({ length: 10 }, (_, i) => ({ field: "photos", filename: `p${i}.jpg`, size: 24 * MB })),
        ),
      );
      // The clients try to send every byte, as the trial's did; Node closes a connection whose
      // request was answered before its body was read, so they cannot.
      const answers = await Promise.all(uploads.map(async (u) => (await u.finish(), u.answer)));
      clearInterval(sampler);
      const sent = uploads.map((u) => u.sent / MB);
      expect(answers.map((a) => a.status)).toEqual([403, 403, 403, 403, 403, 403]);
      figures.push(
        `6 refused uploads of 10 × 24 MB: ${sent.reduce((a, b) => a + b, 0).toFixed(0)} MB of ${((6 * uploads[0]!.total) / MB).toFixed(0)} MB sent before the server answered and closed, in ${Date.now() - started} ms; ` +
          `RSS ${(before.rss / MB).toFixed(0)} → peak ${(peakRss / MB).toFixed(0)} MB (+${((peakRss - before.rss) / MB).toFixed(0)} MB); heap+external peak +${((peakHeap - before.heapUsed - before.external - before.arrayBuffers) / MB).toFixed(0)} MB`,
      );
      for (const mb of sent) expect(mb).toBeLessThan(48);
      expect((peakRss - before.rss) / MB).toBeLessThan(150);
      await until("no temporary files left", () => incomingLeft().length === 0);
    },
  );
});

describe("uploads in flight per person", () => {
  it(`when an inspector has ${UPLOADS_PER_USER} uploads in flight, then the next is refused with 429 before its body is read; once one ends, the next is taken`, async () => {
    const me = "inspector2@demo.test";
    const defect = await newDefect(me);
    const pending = await Promise.all(
      Array.from({ length: UPLOADS_PER_USER }, async (_, i) => {
        const u = openUpload(`/api/defects/${defect}/photos`, me, [{ field: "photos", filename: `slow-${i}.png`, data: await pngOf(200 + i) }]);
        await u.send(120); // the first part header only: the upload is under way
        return u;
      }),
    );
    await until(`${UPLOADS_PER_USER} uploads in flight`, () => uploadsInFlight(ids[me]!) === UPLOADS_PER_USER);

    const extra = openUpload(`/api/defects/${defect}/photos`, me, [{ field: "photos", filename: "one-more.png", size: 20 * MB }]);
    await extra.send(MB);
    const refused = await extra.answer;
    extra.abort();
    expect(refused.status).toBe(429);
    expect(refused.body.error.code).toBe("too_many_uploads");
    expect(refused.body.error.message).toBe(`You already have ${UPLOADS_PER_USER} uploads in progress. Wait until one has finished, then send this one again.`);
    expect(refused.headers["retry-after"]).toBe("10");
    expect(extra.sent).toBe(MB);
    // Someone else is not held up by this inspector's uploads.
    const other = await as("inspector3@demo.test")
      .post(`/api/defects/${await newDefect("inspector3@demo.test")}/photos`)
      .attach("photos", await pngOf(31), "other.png");
    expect(other.status).toBe(201);

    const first = await pending[0]!.finish();
    expect(first.status).toBe(201);
    await until("a slot freed", () => uploadsInFlight(ids[me]!) === UPLOADS_PER_USER - 1);
    const next = await as(me)
      .post(`/api/defects/${defect}/photos`)
      .attach("photos", await pngOf(40), "next.png");
    expect(next.status).toBe(201);
    for (const u of pending.slice(1)) u.abort();
    await until("every slot freed", () => uploadsInFlight(ids[me]!) === 0);
    await until("no temporary files left", () => incomingLeft().length === 0);
    expect(photoRows(defect)).toBe(2);
  });
});

describe("clients that go away", () => {
  /**
   * The moments that matter are made to happen in a known order on a small app of the test's own:
   * the client has gone before the server takes the upload slot, or before the form is read.
   */
  async function withServer(setup: (app: express.Express) => void, fn: (url: string) => Promise<void>) {
    const app = express();
    setup(app);
    const s = app.listen(0, "127.0.0.1");
    await new Promise<void>((resolve) => s.once("listening", () => resolve()));
    try {
      await fn(`http://127.0.0.1:${(s.address() as AddressInfo).port}`);
    } finally {
      s.closeAllConnections();
      await new Promise<void>((resolve) => s.close(() => resolve()));
    }
  }
  /** Sends the whole request, waits a moment, then drops the connection without waiting for an answer. */
  async function sendAndGo(url: string, body: Buffer, contentType: string) {
    const req = http.request(url, { method: "POST", headers: { "content-type": contentType, "content-length": String(body.length) } });
    req.on("error", () => undefined);
    req.end(body);
    await new Promise((r) => setTimeout(r, 100));
    req.destroy();
  }
  const gone = (res: express.Response) => new Promise<void>((resolve) => (res.destroyed ? resolve() : res.once("close", () => resolve())));

  it("when the connection has closed by the time the upload slot is taken, then no slot is taken (it would never be given back)", async () => {
    let outcome: unknown = null;
    await withServer(
      (app) =>
        app.post("/up", async (req, res) => {
          await gone(res);
          try {
            takeUploadSlot("gone-user", res);
            outcome = "taken";
          } catch (err) {
            outcome = err;
          }
        }),
      async (url) => {
        await sendAndGo(`${url}/up`, Buffer.from("x"), "text/plain");
        await until("the server handled it", () => outcome !== null);
      },
    );
    expect(outcome).toMatchObject({ status: 400, code: "upload_unreadable" });
    expect(uploadsInFlight("gone-user")).toBe(0);
  });

  it("when the client goes away while its temporary file is still being written (a busy server), then the file is removed", async () => {
    const before = new Set(incomingLeft());
    await withServer(
      (app) => app.post("/up", diskUpload({ field: "file", maxFiles: 1, maxBytes: 8 * MB }), (_req, res) => res.end()),
      async (url) => {
        const boundary = "----gone-while-written";
        const body = Buffer.concat([
          Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="a.bin"\r\n\r\n`),
          Buffer.alloc(2 * MB, 0x42),
          Buffer.from(`\r\n--${boundary}--\r\n`),
        ]);
        // Four times: the moment is a matter of timing, and one leak is enough to fail.
        for (let attempt = 0; attempt < 4; attempt++) {
          const req = http.request(`${url}/up`, {
            method: "POST",
            headers: { "content-type": `multipart/form-data; boundary=${boundary}`, "content-length": String(body.length) },
          });
          req.on("error", () => undefined);
          req.write(body.subarray(0, 1024));
          await new Promise((r) => setTimeout(r, 100)); // the server has opened the temporary file
          // The server is busy: libuv's four threads (which also write files) are taken by other work,
          // so the whole body is read and the connection's end seen before the file has been written.
          const busy = Array.from({ length: 4 }, () => new Promise((r) => crypto.pbkdf2("busy", "salt", 300_000, 32, "sha512", r)));
          req.end(body.subarray(1024));
          await new Promise((r) => setTimeout(r, 30));
          req.destroy();
          await Promise.all(busy);
        }
        await new Promise((r) => setTimeout(r, 500));
      },
    );
    expect(incomingLeft().filter((f) => !before.has(f))).toEqual([]);
  });
});

describe("an entry that changes while its photos are decoded", () => {
  for (const change of ["reviewed", "deleted"] as const) {
    it(`when the entry is ${change} while its photos are being decoded, then 409 and no photo row or file is left`, { timeout: 60_000 }, async () => {
      const me = "inspector@demo.test";
      const defect = await newDefect(me);
      // Ten 49-MP photos: seconds of decoding, two at a time, so the change lands in the middle.
      const big = await sharp({ create: { width: 7000, height: 7000, channels: 3, background: change === "reviewed" ? "#864" : "#468" } })
        .png({ compressionLevel: 9 })
        .toBuffer();
      const [files0, incoming0] = [photoFiles(), incomingLeft().length];
      expect(photoDecodeState()).toEqual({ active: 0, waiting: 0 });
      let req = as(me).post(`/api/defects/${defect}/photos`);
      for (let k = 0; k < PHOTO_MAX_FILES; k++) req = req.attach("photos", big, `meanwhile-${k}.png`);
      const answer = req.then((r) => r);
      await until("the photos are being decoded", () => photoDecodeState().active > 0);
      const meanwhile =
        change === "reviewed"
          ? await as("quality@demo.test").post(`/api/defects/${defect}/review`).send({ decision: "confirm" })
          : await as(me).delete(`/api/defects/${defect}`);
      expect(meanwhile.status).toBe(200);
      const stillDecoding = photoDecodeState();
      const res = await answer;
      expect(stillDecoding.active + stillDecoding.waiting).toBeGreaterThan(0);
      expect(res.status).toBe(409);
      expect(res.body.error.code).toBe("changed_meanwhile");
      expect(res.body.error.message).toBe(
        change === "reviewed"
          ? "A quality engineer reviewed the entry while the photos were being sent; they were not stored. Only a quality engineer can add photos to it now."
          : "The entry was deleted while the photos were being sent; they were not stored.",
      );
      expect(photoRows(defect)).toBe(0);
      expect(photoFiles()).toBe(files0);
      await until("no temporary files left", () => incomingLeft().length === incoming0);
      expect(one("select count(*) from audit_log where entity = 'defect' and entity_id = ? and action = 'defect.photos.add'", String(defect))).toBe(0);
    });
  }
});

describe("photo caps", () => {
  it(`when an entry has ${PHOTO_MAX_PER_DEFECT} photos, then a send that would pass it is refused whole, and one more is refused before its body is read`, async () => {
    const me = "quality@demo.test";
    const defect = await newDefect(me);
    let seed = 1000;
    const send = async (n: number) => {
      let req = as(me).post(`/api/defects/${defect}/photos`);
      for (let i = 0; i < n; i++) req = req.attach("photos", await pngOf(seed++), `cap-${seed}.png`);
      return req;
    };
    for (const n of [PHOTO_MAX_FILES, PHOTO_MAX_FILES, 5]) expect((await send(n)).status).toBe(201);
    expect(photoRows(defect)).toBe(25);
    const over = await send(6);
    expect(over.status).toBe(409);
    expect(over.body.error).toMatchObject({
      code: "photo_limit",
      message: `This entry has 25 photos; 6 more would pass the ${PHOTO_MAX_PER_DEFECT} one entry keeps. Send at most 5.`,
    });
    expect(photoRows(defect)).toBe(25);
    expect((await send(5)).status).toBe(201);
    expect(photoRows(defect)).toBe(PHOTO_MAX_PER_DEFECT);

    const up = openUpload(`/api/defects/${defect}/photos`, me, [{ field: "photos", filename: "31st.png", size: 20 * MB }]);
    await up.send(MB);
    const full = await up.answer;
    up.abort();
    expect(full.status).toBe(409);
    expect(full.body.error.message).toBe(`This entry already has ${PHOTO_MAX_PER_DEFECT} photos, the most one entry keeps. Remove some before adding more.`);
    expect(up.sent).toBe(MB);
    expect(photoRows(defect)).toBe(PHOTO_MAX_PER_DEFECT);
  });

  it(`when a person has added ${PHOTO_MAX_PER_USER_HOUR} photos in the last hour (deleted ones included), then the next is refused with 429 until they are more than an hour old`, async () => {
    const me = "inspector3@demo.test";
    const defect = await newDefect(me);
    const elsewhere = await newDefect(me);
    const added = one("select count(*) from defect_photos where created_by = ?", ids[me]) as number;
    const now = Date.now();
    const ins = t.db.$client.prepare(
      "insert into defect_photos (id, defect_id, display_file, display_mime, thumb_file, width, height, bytes, sha256, created_by, created_at, deleted_at) values (?, ?, ?, 'image/webp', ?, 8, 8, 1, 'x', ?, ?, ?)",
    );
    // Added (and removed again) within the last hour, on another entry.
    for (let i = added; i < PHOTO_MAX_PER_USER_HOUR; i++) {
      const id = crypto.randomUUID();
      ins.run(id, elsewhere, `photos/${id}.webp`, `photos/${id}.thumb.jpg`, ids[me], now - 30 * 60_000, now - 29 * 60_000);
    }
    const refused = await as(me)
      .post(`/api/defects/${defect}/photos`)
      .attach("photos", await pngOf(77), "hour.png");
    expect(refused.status).toBe(429);
    expect(refused.body.error).toMatchObject({
      code: "photo_rate",
      message: `You have added ${PHOTO_MAX_PER_USER_HOUR} photos in the last hour; the most is ${PHOTO_MAX_PER_USER_HOUR} an hour. The photos wait on the tablet and are sent later by themselves.`,
    });
    expect(photoRows(defect)).toBe(0);
    t.db.$client.prepare("update defect_photos set created_at = ? where defect_id = ?").run(now - 61 * 60_000, elsewhere);
    const later = await as(me)
      .post(`/api/defects/${defect}/photos`)
      .attach("photos", await pngOf(78), "hour.png");
    expect(later.status).toBe(201);
  });
});

describe("attachment caps", () => {
  it(`when an investigation holds ${ATTACHMENT_MAX_PER_RECORD} files, or a person has attached ${ATTACHMENT_MAX_PER_USER_HOUR} in the last hour, then the next upload is refused before its body is read`, async () => {
    const me = "process@demo.test";
    const heatNo = one("select heat_no from heats order by id limit 1");
    const full = await as(me)
      .post("/api/investigations")
      .send({ title: "Many files", problemStatement: "An investigation with a full file.", heatNos: [heatNo] });
    const other = await as(me)
      .post("/api/investigations")
      .send({ title: "Room left", problemStatement: "An investigation with room.", heatNos: [heatNo] });
    const ins = t.db.$client.prepare(
      "insert into attachments (id, owner_kind, owner_id, file_name, stored_file, mime, bytes, sha256, created_by, created_at) values (?, 'investigation', ?, 'old.txt', 'none', 'text/plain', 1, 'x', ?, ?)",
    );
    // Attached by someone else, long ago: only the investigation's own count matters.
    for (let i = 0; i < ATTACHMENT_MAX_PER_RECORD; i++) ins.run(`cap-${i}`, full.body.id, ids["admin@demo.test"], Date.now() - 86_400_000);
    const refuse = async (url: string) => {
      const up = openUpload(url, me, [{ field: "files", filename: "more.txt", size: 10 * MB }]);
      await up.send(MB);
      const answer = await up.answer;
      up.abort();
      expect(up.sent).toBe(MB);
      return answer;
    };
    const onFull = await refuse(`/api/investigations/${full.body.id}/attachments`);
    expect(onFull.status).toBe(409);
    expect(onFull.body.error).toMatchObject({
      code: "attachment_limit",
      message: `This investigation holds ${ATTACHMENT_MAX_PER_RECORD} files; the most is ${ATTACHMENT_MAX_PER_RECORD}. Merge related documents into one PDF.`,
    });
    expect((await as(me).post(`/api/investigations/${other.body.id}/attachments`).attach("files", Buffer.from("fine\n"), "fine.txt")).status).toBe(200);
    // The same person's last hour: rows on an investigation with room left.
    for (let i = 0; i < ATTACHMENT_MAX_PER_USER_HOUR; i++) ins.run(`rate-${i}`, other.body.id + 1000, ids[me], Date.now() - 60_000);
    const tooMany = await refuse(`/api/investigations/${other.body.id}/attachments`);
    expect(tooMany.status).toBe(429);
    expect(tooMany.body.error.code).toBe("attachment_rate");
    expect(tooMany.headers["retry-after"]).toBe("600");
    t.db.$client.prepare("delete from attachments where id like 'cap-%' or id like 'rate-%'").run();
  });
});

describe("big-pixel photos", () => {
  it(
    "when four people each send ten 49-MP PNGs of about 157 KB, then all are stored, and /api/me answers within a second throughout",
    { timeout: 180_000 },
    async () => {
      const bomb = await sharp({ create: { width: 7000, height: 7000, channels: 3, background: "#5a7" } })
        .png({ compressionLevel: 9 })
        .toBuffer();
      expect(7000 * 7000).toBeLessThan(PHOTO_MAX_PIXELS);
      expect(bomb.length).toBeLessThan(200 * 1024);
      const people = ["inspector@demo.test", "inspector2@demo.test", "quality@demo.test", "admin@demo.test"];
      const defects = await Promise.all(people.map((p) => newDefect(p)));
      const started = Date.now();
      let done = false;
      const uploads = Promise.all(
        people.map(async (p, i) => {
          let req = as(p).post(`/api/defects/${defects[i]}/photos`);
          for (let k = 0; k < PHOTO_MAX_FILES; k++) req = req.attach("photos", bomb, `big-${k}.png`);
          return req;
        }),
      ).finally(() => (done = true));
      const latencies: number[] = [];
      while (!done) {
        const t0 = performance.now();
        const me = await as("claims@demo.test").get("/api/me");
        latencies.push(performance.now() - t0);
        expect(me.status).toBe(200);
        await new Promise((r) => setTimeout(r, 50));
      }
      const answers = await uploads;
      const took = Date.now() - started;
      expect(answers.map((a) => a.status)).toEqual([201, 201, 201, 201]);
      for (const d of defects) expect(photoRows(d)).toBe(PHOTO_MAX_FILES);
      const worst = Math.max(...latencies);
      figures.push(
        `4 × ${PHOTO_MAX_FILES} PNGs of 7000 × 7000 (${(bomb.length / 1024).toFixed(0)} KB each) stored in ${took} ms; /api/me asked ${latencies.length} times meanwhile, ` +
          `slowest ${worst.toFixed(0)} ms, median ${latencies.sort((a, b) => a - b)[Math.floor(latencies.length / 2)]!.toFixed(0)} ms`,
      );
      // The liveness bound: the rest of the plant keeps working while photos decode.
      expect(worst).toBeLessThan(1000);
    },
  );

  it(
    `when more than ${PHOTO_DECODE_QUEUE_MAX} photos would wait for decoding, then an upload that does not fit is answered 503 busy with Retry-After, and the others are stored`,
    { timeout: 180_000 },
    async () => {
      const big = await sharp({ create: { width: 7000, height: 7000, channels: 3, background: "#7a5" } })
        .png({ compressionLevel: 9 })
        .toBuffer();
      const people = ["admin@demo.test", "inspector3@demo.test"];
      const defects = await Promise.all(people.map((p) => newDefect(p)));
      // Two people, three sends of ten each: 60 photos for a queue of 40.
      const sends = people.flatMap((p, i) =>
        Array.from({ length: UPLOADS_PER_USER }, async () => {
          let req = as(p).post(`/api/defects/${defects[i]}/photos`);
          for (let k = 0; k < PHOTO_MAX_FILES; k++) req = req.attach("photos", big, `queue-${k}.png`);
          return req;
        }),
      );
      const answers = await Promise.all(sends);
      const busy = answers.filter((a) => a.status === 503);
      figures.push(`6 sends of 10 × 49-MP PNGs at once: ${answers.length - busy.length} stored, ${busy.length} answered 503 busy`);
      expect(busy.length).toBeGreaterThanOrEqual(1);
      for (const b of busy) {
        expect(b.body.error.code).toBe("busy");
        expect(b.body.error.message).toBe(
          "The server is busy processing other photos. Try again in a minute; the tablet sends waiting photos again by itself.",
        );
        expect(b.headers["retry-after"]).toBe("30");
      }
      expect(answers.filter((a) => a.status !== 503).map((a) => a.status)).toEqual(Array(answers.length - busy.length).fill(201));
      expect(defects.reduce((n, d) => n + photoRows(d), 0)).toBe((answers.length - busy.length) * PHOTO_MAX_FILES);
      await until("no temporary files left", () => incomingLeft().length === 0);
    },
  );
});

describe("attachment names", () => {
  let inv: number;
  beforeAll(async () => {
    const heatNo = one("select heat_no from heats order by id limit 1");
    const res = await as("process@demo.test")
      .post("/api/investigations")
      .send({ title: "Names", problemStatement: "Attachments with hostile names.", heatNos: [heatNo] });
    inv = res.body.id;
  });
  const attach = (name: string, data: Buffer) => as("process@demo.test").post(`/api/investigations/${inv}/attachments`).attach("files", data, name);
  const rows = () => one("select count(*) from attachments") as number;

  it("when files named in UTF-8 (ünïcødé.txt, a photo named Größe.jpg) are sent, then they are kept and offered under those names, not as Ã¼nÃ¯cÃ¸dÃ©", async () => {
    const res = await attach("ünïcødé.txt", Buffer.from("Kokillenpegel 3,1 mm\n"));
    expect(res.status).toBe(200);
    const a = res.body.attachments.at(-1);
    expect(a.fileName).toBe("ünïcødé.txt");
    expect(one("select file_name from attachments where id = ?", a.id)).toBe("ünïcødé.txt");
    const file = await as("quality@demo.test").get(a.url).buffer(true);
    expect(file.headers["content-disposition"]).toBe(`attachment; filename="_n_c_d_.txt"; filename*=UTF-8''${encodeURIComponent("ünïcødé.txt")}`);
    expect(file.headers["content-type"]).toMatch(/^text\/plain/);

    const defect = await newDefect("inspector@demo.test");
    const photo = await as("inspector@demo.test")
      .post(`/api/defects/${defect}/photos`)
      .attach("photos", await pngOf(5), "Größe.png");
    expect(photo.status).toBe(201);
    expect(one("select original_name from defect_photos where id = ?", photo.body.photos[0].id)).toBe("Größe.png");
  });

  const jpeg = () =>
    sharp({ create: { width: 8, height: 8, channels: 3, background: "#333" } })
      .jpeg()
      .toBuffer();
  const active: [string, () => Promise<Buffer> | Buffer, string][] = [
    ["evidence.bat", () => Buffer.from("@echo off\r\ndel /q C:\\*\r\n"), "bat"],
    ["report.hta", () => Buffer.from("<html><script>new ActiveXObject('WScript.Shell')</script></html>"), "hta"],
    ["x.svg", () => Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"/>'), "svg"],
    ["poly.jpg.html", async () => Buffer.concat([await jpeg(), Buffer.from("<html><script>alert(1)</script></html>")]), "html"],
    ["page.htm", () => Buffer.from("<p>hello</p>"), "htm"],
    ["tidy.ps1", () => Buffer.from("Remove-Item -Recurse C:\\\n"), "ps1"],
    ["evidence.bat.", () => Buffer.from("@echo off\r\n"), "bat"],
    ["evil\u202efdp.exe", () => Buffer.from("looks like a PDF name in some viewers\n"), "exe"],
  ];
  for (const [name, content, ext] of active) {
    it(`when ${JSON.stringify(name)} is attached, then 415 says a .${ext} file can run programs or scripts, and nothing is stored`, async () => {
      const before = rows();
      const res = await attach(name, await content());
      expect(res.status).toBe(415);
      expect(res.body.error.code).toBe("active_content");
      expect(res.body.error.message).toContain(`a .${ext} file can run programs or scripts when it is opened`);
      expect(rows()).toBe(before);
    });
  }

  it("when a file's content is of another kind than its name says, then it is kept and downloaded with the content's extension", async () => {
    const pdf = Buffer.from("%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n");
    const sent: [string, Buffer, string, string][] = [
      ["notes.log", Buffer.from("10:00 stopper rod change\n"), "notes.log.txt", "text/plain"],
      ["scan.png", await jpeg(), "scan.jpg", "image/jpeg"],
      ["report", pdf, "report.pdf", "application/pdf"],
      ["levels.csv", Buffer.from("time,level\n10:00,3.1\n"), "levels.csv", "text/csv"],
      ["readme.txt.", Buffer.from("trailing dot\n"), "readme.txt", "text/plain"],
    ];
    for (const [name, data, kept, mime] of sent) {
      const res = await attach(name, data);
      expect(res.status).toBe(200);
      const a = res.body.attachments.at(-1);
      expect([a.fileName, a.mime]).toEqual([kept, mime]);
      const file = await as("process@demo.test").get(a.url).buffer(true);
      expect(file.headers["content-disposition"]).toContain(`filename="${kept}"`);
    }
  });

  it("when an attachment was stored under an active name before names were checked, then it is offered under a name of its kind", async () => {
    const id = crypto.randomUUID();
    const dir = path.join(t.env.UPLOAD_DIR, "attachments");
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, id), "@echo off\r\n");
    t.db.$client
      .prepare(
        "insert into attachments (id, owner_kind, owner_id, file_name, stored_file, mime, bytes, sha256) values (?, 'investigation', ?, 'evidence.bat', ?, 'text/plain', 11, 'x')",
      )
      .run(id, inv, id);
    const file = await as("quality@demo.test").get(`/api/attachments/${id}`).buffer(true);
    expect(file.status).toBe(200);
    expect(file.headers["content-disposition"]).toContain('filename="evidence.txt"');
  });
});

describe("a store that cannot be written", () => {
  /**
   * Tests may run as root, where chmod does not stop writes: there the folder is made immutable
   * (chattr +i, which stops root too); otherwise its write permission is taken away.
   */
  function lockFolder(dir: string) {
    fs.mkdirSync(dir, { recursive: true });
    if (process.getuid?.() === 0) execFileSync("chattr", ["-R", "+i", dir]);
    else execFileSync("chmod", ["-R", "a-w", dir]);
    return () => {
      if (process.getuid?.() === 0) execFileSync("chattr", ["-R", "-i", dir]);
      else execFileSync("chmod", ["-R", "u+w", dir]);
    };
  }
  function appWithLog() {
    const lines: string[] = [];
    const sink = new Writable({ write: (chunk, _enc, cb) => (lines.push(String(chunk)), cb()) });
    const app = createApp({ db: t.db, auth: t.auth, env: t.env, logger: pino({ level: "error" }, sink), serveClient: false, mailer: t.mailer });
    return { app, logged: () => lines.map((l) => JSON.parse(l) as Record<string, any>) };
  }

  it("when the photo store cannot be written, then 503 says so in words, the log has the cause, and nothing is stored", async () => {
    const { app, logged } = appWithLog();
    const defect = await newDefect("inspector@demo.test");
    const unlock = lockFolder(path.join(t.env.UPLOAD_DIR, "photos"));
    let res: request.Response;
    try {
      res = await request(app)
        .post(`/api/defects/${defect}/photos`)
        .set("Cookie", cookies["inspector@demo.test"]!)
        .set("Origin", O)
        .attach("photos", await pngOf(9), "locked.png");
    } finally {
      unlock();
    }
    expect(res.status).toBe(503);
    expect(res.body.error).toEqual({
      code: "store_unwritable",
      message: "The photo store cannot be written to; nothing was stored. Tell the administrator.",
      details: { store: "photo" },
    });
    expect(photoRows(defect)).toBe(0);
    const line = logged().find((l) => l.code === "store_unwritable");
    expect(line?.msg).toBe(res.body.error.message);
    expect(["EPERM", "EACCES"]).toContain(line?.err?.code);
    expect(line?.err?.path).toContain(path.join(t.env.UPLOAD_DIR, "photos"));
  });

  it("when the attachment store cannot be written, then 503 says so in words, and nothing is stored", async () => {
    const { app } = appWithLog();
    const heatNo = one("select heat_no from heats order by id limit 1");
    const inv = await as("process@demo.test")
      .post("/api/investigations")
      .send({ title: "Locked store", problemStatement: "Attachments into a locked store.", heatNos: [heatNo] });
    const before = one("select count(*) from attachments") as number;
    const unlock = lockFolder(path.join(t.env.UPLOAD_DIR, "attachments"));
    let res: request.Response;
    try {
      res = await request(app)
        .post(`/api/investigations/${inv.body.id}/attachments`)
        .set("Cookie", cookies["process@demo.test"]!)
        .set("Origin", O)
        .attach("files", Buffer.from("note\n"), "note.txt");
    } finally {
      unlock();
    }
    expect(res.status).toBe(503);
    expect(res.body.error.message).toBe("The attachment store cannot be written to; nothing was stored. Tell the administrator.");
    expect(one("select count(*) from attachments")).toBe(before);
  });
});
