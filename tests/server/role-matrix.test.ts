import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import type { AnyRoute } from "../../server/lib/route";
import { CAPABILITIES, ROLES, type Role } from "../../shared/roles";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * Every route the app serves × signed out and each of the five roles. Allowed gives 2xx, a role
 * without the capability gives 403, signed out gives 401. A new route fails this test until it has
 * a sample request below, so no route escapes the matrix.
 */
let t: TestApp;
let agents: Record<Role, request.Agent>;
let counter = 0;

type Sample = (t: TestApp) => { path: string; body?: unknown };
const samples: Record<string, Sample> = {
  "GET /health": () => ({ path: "/api/health" }),
  "GET /about": () => ({ path: "/api/about" }),
  "GET /me": () => ({ path: "/api/me" }),
  "GET /admin/users": () => ({ path: "/api/admin/users" }),
  "POST /admin/users": () => ({
    path: "/api/admin/users",
    body: { name: "Matrix User", email: `matrix${++counter}@example.test`, roles: ["inspector"], password: "long-enough-pw" },
  }),
  "PATCH /admin/users/:id": (t) => {
    const id = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get() as string;
    return { path: `/api/admin/users/${id}`, body: { name: "Clara Mbeki (demo claims officer)" } };
  },
  "GET /slabs/search": () => ({ path: "/api/slabs/search?q=L26" }),
  "GET /plant/summary": () => ({ path: "/api/plant/summary" }),
  "GET /plant/setup": () => ({ path: "/api/plant/setup" }),
};

const key = (r: AnyRoute) => `${r.method.toUpperCase()} ${r.path}`;

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
  it("when the app is built, then every route has a sample request in this test", () => {
    const routes = t.app.locals.routes as AnyRoute[];
    expect(routes.length).toBeGreaterThan(5);
    expect(routes.map(key).filter((k) => !samples[k])).toEqual([]);
  });

  it("when signed out, then every non-public route answers 401 JSON", async () => {
    for (const route of t.app.locals.routes as AnyRoute[]) {
      const res = await send(request(t.app), route, samples[key(route)]!(t));
      if (route.access === "public") {
        expect(res.status, key(route)).toBeLessThan(300);
      } else {
        expect(res.status, key(route)).toBe(401);
        expect(res.body.error.code, key(route)).toBe("unauthenticated");
      }
    }
  });

  it.each(ROLES)("when signed in as %s, then allowed routes answer 2xx and the others 403", async (role) => {
    for (const route of t.app.locals.routes as AnyRoute[]) {
      const res = await send(agents[role], route, samples[key(route)]!(t));
      const access = route.access;
      const allowed =
        access === "public" || access === "signed-in" ? true : access === "ingest.token" ? false : (CAPABILITIES[access] as readonly Role[]).includes(role);
      if (allowed) {
        expect(res.status, `${role} ${key(route)} ${JSON.stringify(res.body)}`).toBeGreaterThanOrEqual(200);
        expect(res.status, `${role} ${key(route)} ${JSON.stringify(res.body)}`).toBeLessThan(300);
      } else {
        expect(res.status, `${role} ${key(route)}`).toBe(access === "ingest.token" ? 401 : 403);
        expect(res.body.error.code).toBe(access === "ingest.token" ? "unauthenticated" : "forbidden");
      }
    }
  });
});
