/**
 * A bounded load on the real server over loopback: `writers` clients post defects as fast as they
 * are answered while `readers` clients read reports, for `seconds`. Plain fetch (Node's undici);
 * every answer's status and latency is kept. Used by the load test and by `npm run bench`.
 */
import type { Db } from "../../server/db/client";

export interface LoadResult {
  seconds: number;
  posts: { status: number; ms: number }[];
  reads: { status: number; ms: number }[];
  created: number;
  keyPrefix: string;
}

export const percentile = (xs: number[], p: number) => {
  if (xs.length === 0) return NaN;
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)]!;
};

async function signIn(baseUrl: string, email: string, password: string): Promise<string> {
  const res = await fetch(`${baseUrl}/api/auth/sign-in/email`, {
    method: "POST",
    headers: { "content-type": "application/json", origin: baseUrl },
    body: JSON.stringify({ email, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status}`);
  return res.headers
    .getSetCookie()
    .map((c) => c.split(";")[0])
    .join("; ");
}

export async function runLoad(opts: { baseUrl: string; db: Db; password: string; writers?: number; readers?: number; seconds?: number }): Promise<LoadResult> {
  const writers = opts.writers ?? 32;
  const readers = opts.readers ?? 4;
  const seconds = opts.seconds ?? 30;
  const slabs = opts.db.$client.prepare("select slab_id, length_mm, width_mm from slabs order by id limit 400").all() as {
    slab_id: string;
    length_mm: number;
    width_mm: number;
  }[];
  const keyPrefix = `load-${Date.now().toString(36)}`;
  const writerCookies = await Promise.all(Array.from({ length: writers }, () => signIn(opts.baseUrl, "inspector@demo.test", opts.password)));
  const readerCookies = await Promise.all(Array.from({ length: readers }, () => signIn(opts.baseUrl, "quality@demo.test", opts.password)));
  const posts: LoadResult["posts"] = [];
  const reads: LoadResult["reads"] = [];
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
      const res = await fetch(`${opts.baseUrl}/api/defects`, {
        method: "POST",
        headers: { "content-type": "application/json", origin: opts.baseUrl, cookie },
        body: JSON.stringify(body),
      });
      await res.arrayBuffer();
      posts.push({ status: res.status, ms: performance.now() - t0 });
    }
  };
  const READS = [
    "/api/reports/rate-by-variable?variable=casting_speed_m_min&defectType=SLG",
    "/api/reports/overview?period=week",
    "/api/reports/screening?defectType=LFC",
    "/api/reports/control-chart?period=day",
  ];
  const reader = async (cookie: string, r: number) => {
    let k = r;
    while (performance.now() < deadline) {
      const t0 = performance.now();
      const res = await fetch(`${opts.baseUrl}${READS[k++ % READS.length]}`, { headers: { cookie } });
      await res.arrayBuffer();
      reads.push({ status: res.status, ms: performance.now() - t0 });
    }
  };
  await Promise.all([...writerCookies.map((c, w) => writer(c, w)), ...readerCookies.map((c, r) => reader(c, r))]);
  const created = opts.db.$client.prepare("select count(*) from defects where client_key like ?").pluck().get(`${keyPrefix}-%`) as number;
  return { seconds, posts, reads, created, keyPrefix };
}

export function describeLoad(r: LoadResult) {
  const ok = r.posts.filter((p) => p.status === 201);
  return {
    posts: r.posts.length,
    created201: ok.length,
    rows: r.created,
    fiveHundreds: [...r.posts, ...r.reads].filter((x) => x.status >= 500).length,
    postP50: percentile(
      r.posts.map((p) => p.ms),
      50,
    ),
    postP95: percentile(
      r.posts.map((p) => p.ms),
      95,
    ),
    reads: r.reads.length,
    readP95: percentile(
      r.reads.map((p) => p.ms),
      95,
    ),
    postsPerSecond: r.posts.length / r.seconds,
  };
}
