import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import type { AnyRoute } from "../../server/lib/route";
import { ROLES, type Role } from "../../shared/roles";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * Every route the app serves × signed out and each of the five roles. The expected answer of each
 * cell is written out here by hand — not derived from the server's own capability table — so a
 * wrong policy in shared/roles.ts fails this test. A new route fails it until it has a row below.
 */
let t: TestApp;
let agents: Record<Role, request.Agent>;
let counter = 0;

type Who = Role | "public" | "signed-in";
interface Row {
  /** Who gets 2xx; everyone else signed in gets 403, signed out gets 401. */
  allowed: Who[];
  sample: (t: TestApp) => { path: string; body?: unknown };
}

const EVERY_ROLE: Role[] = ["inspector", "quality", "process", "claims", "admin"];

const matrix: Record<string, Row> = {
  "GET /health": { allowed: ["public"], sample: () => ({ path: "/api/health" }) },
  "GET /about": { allowed: ["public"], sample: () => ({ path: "/api/about" }) },
  "GET /me": { allowed: ["signed-in"], sample: () => ({ path: "/api/me" }) },
  "GET /admin/users": { allowed: ["admin"], sample: () => ({ path: "/api/admin/users" }) },
  "POST /admin/users": {
    allowed: ["admin"],
    sample: () => ({
      path: "/api/admin/users",
      body: { name: "Matrix User", email: `matrix${++counter}@example.test`, roles: ["inspector"], password: "long-enough-pw" },
    }),
  },
  "PATCH /admin/users/:id": {
    allowed: ["admin"],
    sample: (t) => {
      const id = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get() as string;
      return { path: `/api/admin/users/${id}`, body: { name: "Clara Mbeki (demo claims officer)" } };
    },
  },
  "GET /slabs/search": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/slabs/search?q=L26" }) },
  "GET /plant/summary": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/plant/summary" }) },
  "GET /plant/setup": { allowed: EVERY_ROLE, sample: () => ({ path: "/api/plant/setup" }) },
  "GET /heats": { allowed: ["quality", "process", "claims", "admin"], sample: () => ({ path: "/api/heats?pageSize=5" }) },
  "GET /heats/:heatNo": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/heats/${firstHeat(t)}` }) },
  "GET /heats/:heatNo/samples": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/heats/${firstHeat(t)}/samples` }) },
  "GET /slabs/:slabId": { allowed: EVERY_ROLE, sample: (t) => ({ path: `/api/slabs/${firstSlab(t)}` }) },
};

function firstHeat(t: TestApp) {
  return t.db.$client.prepare("select heat_no from heats order by id limit 1").pluck().get() as string;
}
function firstSlab(t: TestApp) {
  return t.db.$client.prepare("select slab_id from slabs order by id limit 1").pluck().get() as string;
}

const key = (r: AnyRoute) => `${r.method.toUpperCase()} ${r.path}`;
const routes = () => t.app.locals.routes as AnyRoute[];

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  agents = {} as Record<Role, request.Agent>;
  for (const role of ROLES) agents[role] = await t.agentFor(role);
});
afterAll(() => t?.close());

function send(agent: request.Agent | ReturnType<typeof request>, route: AnyRoute, s: { path: string; body?: unknown }) {
  const call = (agent as request.Agent)[route.method](s.path).set("Origin", t.env.BETTER_AUTH_URL);
  return s.body !== undefined ? call.send(s.body as object) : call;
}

describe("role matrix", () => {
  it("when the app is built, then every route has a row in this test, and every row a route", () => {
    const served = routes().map(key).sort();
    expect(served).toEqual(Object.keys(matrix).sort());
  });

  it("when signed out, then every non-public route answers 401 JSON", async () => {
    for (const route of routes()) {
      const row = matrix[key(route)]!;
      const res = await send(request(t.app), route, row.sample(t));
      if (row.allowed.includes("public")) {
        expect(res.status, key(route)).toBe(200);
      } else {
        expect(res.status, key(route)).toBe(401);
        expect(res.body.error.code, key(route)).toBe("unauthenticated");
      }
    }
  });

  it.each(ROLES)("when signed in as %s, then the allowed routes answer 2xx and the others 403", async (role) => {
    for (const route of routes()) {
      const row = matrix[key(route)]!;
      const res = await send(agents[role], route, row.sample(t));
      const allowed = row.allowed.includes("public") || row.allowed.includes("signed-in") || row.allowed.includes(role);
      const what = `${role} ${key(route)} → ${res.status} ${JSON.stringify(res.body).slice(0, 200)}`;
      if (allowed) {
        expect(res.status >= 200 && res.status < 300, what).toBe(true);
      } else {
        expect(res.status, what).toBe(403);
        expect(res.body.error.code, what).toBe("forbidden");
      }
    }
  });
});
