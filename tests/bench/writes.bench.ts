/**
 * `npm run bench:writes` — the write path under load (issue 14). 32 clients post defects as fast as
 * they are answered, over loopback, to servers in their own processes (so each one's CPU time is its
 * own), on the demo plant (seeded once into a template database in the temp folder, copied for each
 * server), with the clients signed in beforehand (password hashing is not the write path):
 *
 *   floor      a bare Express + better-sqlite3 server doing the same SQL work for each post: the
 *              session row, the entry-key look-up, the slab (with its heat, grade and strand) and the
 *              type (with its category), the insert, the slab's disposition, the audit row, in one
 *              transaction with statements prepared once; it answers the same JSON.
 *   app        the real Strandsight app, the same 32 writers. Floor and app take turns (ROUNDS
 *              slices each) so that both meet the same machine: its load drifts within a minute.
 *   app+reads  the real app, 32 writers while 4 clients read reports (the issue's scenario).
 *
 * Printed for each: posts/s, p50 and p95 of a post, the server's CPU time per request
 * (process.cpuUsage in the server process over its slices, divided by the requests it answered) and
 * how long its event loop was held up (what a post waits for while a report computes); in the last
 * phase also each report's median time. The targets: the app's CPU per post within 1.5× the floor's,
 * and with reports read a post's p95 under 100 ms at 500 posts/s or more. Nothing is asserted: a
 * shared, busy machine moves these figures, and the floor measured in the same run is what they are
 * read against.
 *
 * BENCH_WRITES_SECONDS (default 20) per phase; BENCH_WRITES_SCALE (default 1: the demo plant as
 * `npm start` seeds it); BENCH_WRITES_PROFILE=<folder>: each server writes a V8 CPU profile of each
 * of its phases there (floor-posts, app-posts, app-posts-reads .cpuprofile: open them in Chromium's
 * DevTools, Performance panel).
 */
import { fork, type ChildProcess } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { monitorEventLoopDelay } from "node:perf_hooks";
import type Database from "better-sqlite3";
import express from "express";
import { DISPOSITION_RANK } from "../../shared/domain";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { percentile } from "../helpers/load";
import { freePort } from "../helpers/ports";

const here = fileURLToPath(import.meta.url);
const root = path.resolve(path.dirname(here), "../..");
const TEST_PASSWORD = "test-password-123";
const SECONDS = Number(process.env.BENCH_WRITES_SECONDS ?? 20);
/** Posts-only slices per server, taken in turns with the floor's. */
const ROUNDS = 4;
const SCALE = Number(process.env.BENCH_WRITES_SCALE ?? 1);
const PROFILE_DIR = process.env.BENCH_WRITES_PROFILE;

type Usage = { cpuMs: number; requests: number; loopP99Ms: number; loopMaxMs: number };
type ToChild = { type: "usage" } | { type: "exit" } | { type: "profile"; file: string | null };
type FromChild = { type: "ready"; baseUrl: string; dbFile: string } | ({ type: "usage" } & Usage);

// ─── the template database: the demo plant, seeded once per version of the migrations and seed ───

function templateFile(): string {
  const h = crypto.createHash("sha1");
  h.update(String(SCALE));
  for (const dir of ["drizzle", "server/seed"]) {
    for (const f of fs.readdirSync(path.join(root, dir), { recursive: true }).map(String).sort()) {
      const p = path.join(root, dir, f);
      if (fs.statSync(p).isFile()) h.update(f).update(fs.readFileSync(p));
    }
  }
  return path.join(os.tmpdir(), `strandsight-bench-writes-${h.digest("hex").slice(0, 12)}.db`);
}

async function ensureTemplate(file: string) {
  if (fs.existsSync(file)) return;
  console.log(`seeding the demo plant (scale ${SCALE}) into ${file} once…`);
  const { createAuth } = await import("../../server/auth");
  const { seedDemo } = await import("../../server/seed/seed");
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-bench-writes-seed-"));
  const tmp = path.join(dir, "plant.db");
  const db = openDatabase(tmp);
  runMigrations(db);
  const auth = createAuth({ db, secret: "bench-secret-bench-secret-bench-secret", baseURL: "http://localhost:3000" });
  await seedDemo(db, auth, { password: TEST_PASSWORD, scale: SCALE, uploadDir: path.join(dir, "uploads") });
  db.$client.close(); // checkpoints the WAL into the file
  fs.copyFileSync(tmp, `${file}.part`);
  fs.renameSync(`${file}.part`, file);
  fs.rmSync(dir, { recursive: true, force: true });
}

// ─── the servers (child processes) ───

/** The floor: only what any server must do to store a defect, with nothing of a framework's around it. */
function floorApp(sqlite: Database.Database) {
  const app = express();
  app.disable("x-powered-by");
  app.use(express.json({ limit: "2mb" }));
  const q = {
    userByEmail: sqlite.prepare("select id from user where email = ?"),
    newSession: sqlite.prepare("insert into session (id, expires_at, token, created_at, updated_at, user_id) values (?, ?, ?, ?, ?, ?)"),
    session: sqlite.prepare("select u.id, u.name, u.role from session s join user u on u.id = s.user_id where s.token = ? and s.expires_at > ?"),
    existing: sqlite.prepare("select id, created_by from defects where client_key = ?"),
    slab: sqlite.prepare(`select s.id, s.slab_id, s.length_mm, s.width_mm, s.thickness_mm, h.heat_no, g.code as grade_code, st.strand_no
      from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id join strands st on st.id = s.strand_id where s.slab_id = ?`),
    type: sqlite.prepare(
      "select t.id, t.active, t.code, t.name, c.code as category_code from defect_types t join defect_categories c on c.id = t.category_id where upper(t.code) = upper(?)",
    ),
    insert: sqlite.prepare(`insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, length_mm, width_mm, depth_mm, severity,
      stage, disposition, note, client_key, found_at, created_by, created_at, updated_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`),
    disposition: sqlite.prepare(`update slabs set updated_at = @now, disposition = (select disposition from defects where slab_id = @slab and deleted_at is null
      and review_status <> 'rejected' order by ${rankSql} desc limit 1) where id = @slab`),
    audit: sqlite.prepare("insert into audit_log (at, user_id, user_name, action, entity, entity_id, after) values (?, ?, ?, 'defect.create', 'defect', ?, ?)"),
  };
  app.post("/api/auth/sign-in/email", (req, res) => {
    const u = q.userByEmail.get(req.body?.email) as { id: string } | undefined;
    if (!u) return void res.status(401).json({ error: { code: "unauthenticated", message: "No such user." } });
    const token = crypto.randomBytes(24).toString("base64url");
    const now = Date.now();
    q.newSession.run(crypto.randomUUID(), now + 3 * 86400_000, token, now, now, u.id);
    res.cookie("floor_session", token, { httpOnly: true, sameSite: "lax" }).json({ ok: true });
  });
  const store = sqlite.transaction((who: { id: string; name: string }, b: Record<string, any>) => {
    const existing = q.existing.get(b.client_key) as { id: number } | undefined;
    if (existing) return { status: 200, id: existing.id, defect: null };
    const slab = q.slab.get(String(b.slab_id).trim().toUpperCase()) as Record<string, any> | undefined;
    if (!slab) return { status: 404, id: 0, defect: null };
    const type = q.type.get(b.type_code) as Record<string, any> | undefined;
    if (!type?.active) return { status: 400, id: 0, defect: null };
    const now = Date.now();
    const id = Number(
      q.insert.run(
        slab.id,
        type.id,
        b.face,
        b.position_along_mm,
        b.position_across_mm,
        b.length_mm ?? null,
        b.width_mm ?? null,
        b.depth_mm ?? null,
        b.severity,
        b.stage,
        b.disposition,
        b.note || null,
        b.client_key,
        now,
        who.id,
        now,
        now,
      ).lastInsertRowid,
    );
    q.disposition.run({ slab: slab.id, now });
    q.audit.run(now, who.id, who.name, String(id), JSON.stringify({ ...b, slab_id: slab.slab_id }));
    const at = new Date(now).toISOString();
    return {
      status: 201,
      id,
      defect: {
        id,
        slabId: slab.slab_id,
        heatNo: slab.heat_no,
        gradeCode: slab.grade_code,
        strandNo: slab.strand_no,
        slabLengthMm: slab.length_mm,
        slabWidthMm: slab.width_mm,
        slabThicknessMm: slab.thickness_mm,
        typeCode: type.code,
        typeName: type.name,
        categoryCode: type.category_code,
        face: b.face,
        positionAlongMm: b.position_along_mm,
        positionAcrossMm: b.position_across_mm,
        lengthMm: b.length_mm ?? null,
        widthMm: b.width_mm ?? null,
        depthMm: b.depth_mm ?? null,
        severity: b.severity,
        stage: b.stage,
        disposition: b.disposition,
        note: b.note || null,
        reviewStatus: "new",
        reviewedByName: null,
        reviewedAt: null,
        reviewNote: null,
        clientKey: b.client_key,
        foundAt: at,
        createdAt: at,
        updatedAt: at,
        createdById: who.id,
        createdByName: who.name,
        photos: [],
        causes: [],
        canEdit: true,
      },
    };
  });
  app.post("/api/defects", (req, res) => {
    const token = /(?:^|;\s*)floor_session=([^;]+)/.exec(req.headers.cookie ?? "")?.[1];
    const who = token ? (q.session.get(token, Date.now()) as { id: string; name: string; role: string } | undefined) : undefined;
    if (!who) return void res.status(401).json({ error: { code: "unauthenticated", message: "Please sign in to continue." } });
    if (!/\b(inspector|quality|admin)\b/.test(who.role ?? "")) return void res.status(403).json({ error: { code: "forbidden", message: "Not allowed." } });
    const r = store(who, req.body ?? {});
    res.status(r.status).json({ id: r.id, created: r.status === 201, defect: r.defect });
  });
  return app;
}

const rankSql = `case disposition ${Object.entries(DISPOSITION_RANK)
  .map(([d, r]) => `when '${d}' then ${r}`)
  .join(" ")} end`;

/** V8's CPU profiler through the inspector, started and stopped around one phase (BENCH_WRITES_PROFILE). */
let inspector: import("node:inspector").Session | null = null;
let profileFile: string | null = null;
async function profile(file: string | null) {
  const { Session } = await import("node:inspector");
  const post = (method: string, params?: object) =>
    new Promise<any>((resolve, reject) => inspector!.post(method, params ?? {}, (err, result) => (err ? reject(err) : resolve(result))));
  if (file) {
    inspector ??= new Session();
    inspector.connect();
    await post("Profiler.enable");
    await post("Profiler.setSamplingInterval", { interval: 200 });
    await post("Profiler.start");
    profileFile = file;
  } else if (inspector && profileFile) {
    const { profile: p } = await post("Profiler.stop");
    fs.writeFileSync(profileFile, JSON.stringify(p));
    inspector.disconnect();
    profileFile = null;
  }
}

async function serve(kind: "app" | "floor", template: string) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `strandsight-bench-writes-${kind}-`));
  const dbFile = path.join(dir, "app.db");
  fs.copyFileSync(template, dbFile);
  const port = await freePort();
  const baseUrl = `http://localhost:${port}`;
  let requests = 0;
  const loop = monitorEventLoopDelay({ resolution: 5 });
  loop.enable();
  let close: () => Promise<void>;
  const listen = async (app: express.Express) => {
    const server = app.listen(port, "127.0.0.1");
    await new Promise<void>((resolve) => server.once("listening", resolve));
    // The sign-ins of a phase (password hashing) can leave the warm-up's sockets idle past Node's 5 s;
    // a client reusing one as the server drops it gets ECONNRESET. Both servers alike.
    server.keepAliveTimeout = 120_000;
    server.on("request", () => void requests++);
    return server;
  };
  if (kind === "floor") {
    const db = openDatabase(dbFile);
    runMigrations(db);
    const server = await listen(floorApp(db.$client));
    close = async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      db.$client.close();
    };
  } else {
    const { loadEnv, originPolicyOf } = await import("../../server/env");
    const { createAuth } = await import("../../server/auth");
    const { createApp } = await import("../../server/app");
    const { createLogger } = await import("../../server/lib/logger");
    const env = loadEnv({ NODE_ENV: "test", DATABASE_FILE: dbFile, UPLOAD_DIR: path.join(dir, "uploads"), BETTER_AUTH_URL: baseUrl, LOG_LEVEL: "silent" });
    const db = openDatabase(dbFile);
    runMigrations(db);
    const logger = createLogger(env.LOG_LEVEL);
    const auth = createAuth({ db, secret: env.BETTER_AUTH_SECRET, baseURL: env.BETTER_AUTH_URL, origins: originPolicyOf(env), logger });
    const app = createApp({ db, auth, env, logger, serveClient: false });
    const server = await listen(app);
    close = async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await (app.locals.imports as { close(): Promise<void> }).close();
      await (app.locals.mailer as { stop(): Promise<void> }).stop();
      db.$client.close();
    };
  }
  const onMessage = async (m: ToChild) => {
    if (m.type === "usage") {
      const u = process.cpuUsage();
      // How long the event loop was held up since the last reading: what a post waits for while a report computes.
      process.send!({
        type: "usage",
        cpuMs: (u.user + u.system) / 1000,
        requests,
        loopP99Ms: loop.percentile(99) / 1e6,
        loopMaxMs: loop.max / 1e6,
      } satisfies FromChild);
      loop.reset();
    } else if (m.type === "profile") {
      await profile(m.file);
      process.send!({ type: "usage", cpuMs: 0, requests: 0, loopP99Ms: 0, loopMaxMs: 0 } satisfies FromChild);
    } else if (m.type === "exit") {
      await close();
      fs.rmSync(dir, { recursive: true, force: true });
      process.exit(0); // a clean exit writes the --cpu-prof profile
    }
  };
  // A message handled with an error ends the child with it, as an uncaught error would.
  process.on("message", (m: ToChild) => {
    onMessage(m).catch((err: unknown) => {
      console.error(err);
      process.exit(1);
    });
  });
  process.send!({ type: "ready", baseUrl, dbFile } satisfies FromChild);
}

// ─── the runner ───

class Server {
  private waiting: ((m: FromChild) => void)[] = [];
  private constructor(
    private child: ChildProcess,
    readonly baseUrl: string,
    readonly dbFile: string,
  ) {
    child.on("message", (m: FromChild) => this.waiting.shift()?.(m));
  }

  static async start(kind: "app" | "floor", template: string): Promise<Server> {
    const execArgv = ["--import", "tsx"];
    const child = fork(here, ["--serve", kind, template], { execArgv, stdio: ["ignore", "inherit", "inherit", "ipc"], cwd: root });
    const ready = await new Promise<FromChild>((resolve, reject) => {
      child.once("message", resolve);
      child.once("exit", (code) => reject(new Error(`the ${kind} server exited (${code}) before it was ready`)));
    });
    if (ready.type !== "ready") throw new Error("unexpected message");
    child.removeAllListeners("exit");
    return new Server(child, ready.baseUrl, ready.dbFile);
  }

  usage(): Promise<Usage> {
    return new Promise((resolve) => {
      this.waiting.push((m) => resolve(m as Usage));
      this.child.send({ type: "usage" } satisfies ToChild);
    });
  }

  profile(file: string | null): Promise<Usage> {
    return new Promise((resolve) => {
      this.waiting.push((m) => resolve(m as Usage));
      this.child.send({ type: "profile", file } satisfies ToChild);
    });
  }

  async stop() {
    const exited = new Promise((resolve) => this.child.once("exit", resolve));
    this.child.send({ type: "exit" } satisfies ToChild);
    await exited;
  }
}

interface Phase {
  name: string;
  posts: number;
  postsPerSecond: number;
  p50: number;
  p95: number;
  cpuPerRequestMs: number;
  loopP99Ms: number;
  loopMaxMs: number;
  reads: number;
  readP95: number;
  /** Report → [reads, median ms]. */
  byReport: Map<string, [number, number]>;
  lost: number;
  fiveHundreds: number;
  refused: number;
}

async function signIn(baseUrl: string, email: string): Promise<string> {
  const res = await fetch(`${baseUrl}/api/auth/sign-in/email`, {
    method: "POST",
    headers: { "content-type": "application/json", origin: baseUrl },
    body: JSON.stringify({ email, password: TEST_PASSWORD }),
  });
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status}`);
  return res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
}

const READS = [
  "/api/reports/rate-by-variable?variable=casting_speed_m_min&defectType=SLG",
  "/api/reports/overview?period=week",
  "/api/reports/screening?defectType=LFC",
  "/api/reports/control-chart?period=day",
];

/**
 * The load of tests/helpers/load.ts (the same bodies, slabs and report reads), with the sign-ins
 * done before the server's CPU is read: password hashing is not the write path.
 */
async function drive(
  baseUrl: string,
  slabs: { slab_id: string; length_mm: number; width_mm: number }[],
  writerCookies: string[],
  readerCookies: string[],
  seconds: number,
  keyPrefix: string,
) {
  const posts: { status: number; ms: number }[] = [];
  const reads: { status: number; ms: number; path: string }[] = [];
  const deadline = performance.now() + seconds * 1000;
  let n = 0;
  const writer = async (cookie: string, w: number) => {
    while (performance.now() < deadline) {
      const slab = slabs[(w * 7 + n) % slabs.length]!;
      const i = n++;
      const body = {
        slab_id: slab.slab_id,
        type_code: ["SLG", "LFC", "SLV", "CLS"][i % 4],
        face: i % 2 ? "inner" : "outer",
        position_along_mm: (i * 37) % slab.length_mm,
        position_across_mm: (i * 11) % slab.width_mm,
        severity: (i % 3) + 1,
        stage: "slab_yard",
        disposition: "accept",
        client_key: `${keyPrefix}-${w}-${i}`,
      };
      const t0 = performance.now();
      const res = await fetch(`${baseUrl}/api/defects`, {
        method: "POST",
        headers: { "content-type": "application/json", origin: baseUrl, cookie },
        body: JSON.stringify(body),
      });
      await res.arrayBuffer();
      posts.push({ status: res.status, ms: performance.now() - t0 });
    }
  };
  const reader = async (cookie: string, r: number) => {
    let k = r;
    while (performance.now() < deadline) {
      const t0 = performance.now();
      const path = READS[k++ % READS.length]!;
      const res = await fetch(`${baseUrl}${path}`, { headers: { cookie } });
      await res.arrayBuffer();
      reads.push({ status: res.status, ms: performance.now() - t0, path });
    }
  };
  await Promise.all([...writerCookies.map((c, w) => writer(c, w)), ...readerCookies.map((c, r) => reader(c, r))]);
  return { posts, reads };
}

/** A server with its clients signed in (before its CPU is read: password hashing is not the write path). */
interface Driven {
  server: Server;
  db: ReturnType<typeof openDatabase>;
  slabs: { slab_id: string; length_mm: number; width_mm: number }[];
  writers: string[];
  readers: string[];
}

async function clientsOf(server: Server, readers: number): Promise<Driven> {
  const db = openDatabase(server.dbFile);
  const slabs = db.$client.prepare("select slab_id, length_mm, width_mm from slabs order by id limit 400").all() as Driven["slabs"];
  const writerCookies = await Promise.all(Array.from({ length: 32 }, () => signIn(server.baseUrl, "inspector@demo.test")));
  const readerCookies = await Promise.all(Array.from({ length: readers }, () => signIn(server.baseUrl, "quality@demo.test")));
  // A short warm-up, so the JIT and the page cache are as they are on a server that has been up.
  await drive(server.baseUrl, slabs, writerCookies.slice(0, 8), [], 2, `bench-${crypto.randomBytes(4).toString("hex")}-warm`);
  return { server, db, slabs, writers: writerCookies, readers: readerCookies };
}

/**
 * Measures `slices` stretches of `seconds` each on a server; slices of two servers can be
 * interleaved by the caller, so that both meet the same machine (a shared machine's load drifts by
 * half within a minute, which would otherwise show up as a difference between them).
 */
function collector(name: string, d: Driven, readers: boolean, profileAs?: string) {
  const keyPrefix = `bench-${crypto.randomBytes(4).toString("hex")}-run`;
  const posts: { status: number; ms: number }[] = [];
  const reads: { status: number; ms: number; path: string }[] = [];
  let seconds = 0;
  let cpuMs = 0;
  let requests = 0;
  let loopP99Ms = 0;
  let loopMaxMs = 0;
  let profiling = false;
  const profileFile = PROFILE_DIR && profileAs ? path.resolve(PROFILE_DIR, `${profileAs}.cpuprofile`) : null;
  return {
    async slice(s: number) {
      if (profileFile && !profiling) {
        await d.server.profile(profileFile);
        profiling = true;
      }
      const u0 = await d.server.usage();
      const r = await drive(d.server.baseUrl, d.slabs, d.writers, readers ? d.readers : [], s, `${keyPrefix}${seconds}`);
      const u1 = await d.server.usage();
      posts.push(...r.posts);
      reads.push(...r.reads);
      seconds += s;
      cpuMs += u1.cpuMs - u0.cpuMs;
      requests += u1.requests - u0.requests;
      loopP99Ms = Math.max(loopP99Ms, u1.loopP99Ms);
      loopMaxMs = Math.max(loopMaxMs, u1.loopMaxMs);
    },
    async result(): Promise<Phase> {
      if (profiling) await d.server.profile(null);
      const rows = d.db.$client.prepare("select count(*) from defects where client_key like ?").pluck().get(`${keyPrefix}%`) as number;
      const created = posts.filter((p) => p.status === 201).length;
      return {
        name,
        posts: posts.length,
        postsPerSecond: posts.length / seconds,
        p50: percentile(
          posts.map((p) => p.ms),
          50,
        ),
        p95: percentile(
          posts.map((p) => p.ms),
          95,
        ),
        cpuPerRequestMs: cpuMs / requests,
        loopP99Ms,
        loopMaxMs,
        reads: reads.length,
        readP95: percentile(
          reads.map((p) => p.ms),
          95,
        ),
        byReport: new Map(
          READS.map((path) => [
            path,
            [
              reads.filter((x) => x.path === path).length,
              percentile(
                reads.filter((x) => x.path === path).map((x) => x.ms),
                50,
              ),
            ],
          ]),
        ),
        lost: created - rows,
        fiveHundreds: [...posts, ...reads].filter((x) => x.status >= 500).length,
        refused: posts.filter((p) => p.status !== 201).length + reads.filter((p) => p.status !== 200).length,
      };
    },
  };
}

async function main() {
  if (PROFILE_DIR) fs.mkdirSync(PROFILE_DIR, { recursive: true });
  const template = templateFile();
  await ensureTemplate(template);
  const plant = openDatabase(template);
  const [slabs, defects] = plant.$client.prepare("select (select count(*) from slabs), (select count(*) from defects)").raw().get() as number[];
  plant.$client.close();
  console.log(
    `demo plant: ${slabs!.toLocaleString("en")} slabs, ${defects!.toLocaleString("en")} defects; ${SECONDS} s per phase; ${os.cpus().length} cores, load average ${os.loadavg()[0]!.toFixed(1)}`,
  );

  const phases: Phase[] = [];
  const floor = await Server.start("floor", template);
  const app = await Server.start("app", template);
  const driven: Driven[] = [];
  try {
    const f = await clientsOf(floor, 0);
    const a = await clientsOf(app, 4);
    driven.push(f, a);
    // Posts only, floor and app in turns (ROUNDS each, SECONDS in all per server).
    const floorPosts = collector("floor: bare Express + better-sqlite3, posts", f, false, "floor-posts");
    const appPosts = collector("Strandsight, posts", a, false, "app-posts");
    for (let i = 0; i < ROUNDS; i++) {
      await floorPosts.slice(SECONDS / ROUNDS);
      await appPosts.slice(SECONDS / ROUNDS);
    }
    phases.push(await floorPosts.result(), await appPosts.result());
    // The issue's scenario: the app alone, 32 writers while 4 clients read reports.
    const mixed = collector("Strandsight, posts + 4 report readers", a, true, "app-posts-reads");
    await mixed.slice(SECONDS);
    phases.push(await mixed.result());
  } finally {
    for (const d of driven) d.db.$client.close();
    await floor.stop();
    await app.stop();
  }

  const w = Math.max(...phases.map((p) => p.name.length));
  console.log(`\n${"phase".padEnd(w)}  posts/s   p50 ms   p95 ms   CPU/request   loop held p99 / max   reads (p95)      lost  5xx  refused`);
  for (const p of phases) {
    console.log(
      `${p.name.padEnd(w)}  ${p.postsPerSecond.toFixed(0).padStart(7)}  ${p.p50.toFixed(1).padStart(7)}  ${p.p95.toFixed(1).padStart(7)}  ${p.cpuPerRequestMs.toFixed(3).padStart(8)} ms  ${p.loopP99Ms.toFixed(0).padStart(7)} / ${p.loopMaxMs.toFixed(0).padStart(5)} ms  ${String(p.reads).padStart(6)} (${p.readP95.toFixed(0).padStart(4)} ms)  ${String(p.lost).padStart(4)}  ${String(p.fiveHundreds).padStart(3)}  ${String(p.refused).padStart(7)}`,
    );
  }
  const [f, a, m] = phases as [Phase, Phase, Phase];
  console.log(`\nreports read in the last phase (worked out in the report thread, at a lower priority than the posts):`);
  for (const [path, [count, median]] of m.byReport) console.log(`  ${path.padEnd(80)} ${String(count).padStart(4)} reads, median ${median.toFixed(0)} ms`);
  const ratio = a.cpuPerRequestMs / f.cpuPerRequestMs;
  // Summary lines read by scripts/bench.ts (keep their shape).
  console.log("");
  console.log(
    `writes cpu per post  ${a.cpuPerRequestMs.toFixed(3)} ms  floor ${f.cpuPerRequestMs.toFixed(3)} ms  ${ratio.toFixed(2)}×  target ≤ 1.50×  ${ratio <= 1.5 ? "met" : "NOT met"}`,
  );
  console.log(`writes p95 under load  ${m.p95.toFixed(1)} ms  p50 ${m.p50.toFixed(1)} ms  target < 100 ms  ${m.p95 < 100 ? "met" : "NOT met"}`);
  console.log(
    `writes rate under load  ${m.postsPerSecond.toFixed(0)}/s  floor ${f.postsPerSecond.toFixed(0)}/s  target ≥ 500/s  ${m.postsPerSecond >= 500 ? "met" : "NOT met"}`,
  );
  console.log(`writes posts only  ${a.postsPerSecond.toFixed(0)}/s  p95 ${a.p95.toFixed(1)} ms  p50 ${a.p50.toFixed(1)} ms  (recorded)`);
  console.log(
    `writes lost / 5xx / refused  ${m.lost + a.lost} / ${m.fiveHundreds + a.fiveHundreds} / ${m.refused + a.refused}  target 0 / 0 / 0  ${m.lost + a.lost + m.fiveHundreds + a.fiveHundreds + m.refused + a.refused === 0 ? "met" : "NOT met"}`,
  );
}

if (process.argv[2] === "--serve") {
  void serve(process.argv[3] as "app" | "floor", process.argv[4]!);
} else {
  main().then(
    () => process.exit(0),
    (err) => {
      console.error(err);
      process.exit(1);
    },
  );
}
