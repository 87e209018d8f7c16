import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { EnvError, loadEnv } from "../../server/env";

const tmp = () => path.join(fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-env-")), "app.db");

describe("environment", () => {
  it("when .env.example is copied as it is, then its empty lines count as not set and the defaults apply", () => {
    const example = fs.readFileSync(path.resolve(".env.example"), "utf8");
    const vars = Object.fromEntries(
      example
        .split("\n")
        .filter((l) => /^[A-Z_]+=/.test(l))
        .map((l) => [l.slice(0, l.indexOf("=")), l.slice(l.indexOf("=") + 1)]),
    );
    expect(vars.SMTP_URL).toBe("");
    const env = loadEnv({ ...vars, DATABASE_FILE: tmp() });
    expect(env.SMTP_URL).toBeUndefined();
    expect(env.SEED_DEMO).toBeUndefined();
    expect(env.BETTER_AUTH_URL).toBe("http://localhost:3000");
    expect(env.BETTER_AUTH_SECRET.length).toBeGreaterThanOrEqual(32);
    // Empty, not 0 (which would put every condition column in a file on a small plant too).
    expect(vars.REPORT_COLUMNS_MB).toBe("");
    expect(env.REPORT_COLUMNS_MB).toBeUndefined();
    // Not a setting of this file: the allocator reads it before the server does.
    expect(vars.MALLOC_MMAP_THRESHOLD_).toBeUndefined();
  });

  it("when single sign-on is set up half-way or with the fake provider in production, then loading stops and says what is missing", () => {
    expect(() => loadEnv({ OIDC_ISSUER: "https://id.plant.example/realms/works", DATABASE_FILE: tmp() })).toThrow(
      "OIDC_ISSUER is set: give OIDC_CLIENT_ID and OIDC_CLIENT_SECRET too, as registered for Strandsight at the identity provider.",
    );
    expect(() => loadEnv({ OIDC_ISSUER: "id.plant.example", DATABASE_FILE: tmp() })).toThrow(/OIDC_ISSUER must be the provider's issuer URL/);
    const prod = { NODE_ENV: "production", BETTER_AUTH_SECRET: "x".repeat(40), BETTER_AUTH_URL: "https://strandsight.plant.example", DATABASE_FILE: tmp() };
    expect(() => loadEnv({ ...prod, OIDC_ISSUER: "local" })).toThrow(/never in production/);
    const ok = loadEnv({ ...prod, OIDC_ISSUER: "https://id.plant.example/realms/works", OIDC_CLIENT_ID: "strandsight", OIDC_CLIENT_SECRET: "s3cret" });
    expect([ok.OIDC_ISSUER, ok.OIDC_GROUP_CLAIM, ok.OIDC_SCOPES, ok.OIDC_DISPLAY_NAME]).toEqual([
      "https://id.plant.example/realms/works",
      "groups",
      "openid email profile groups",
      "your plant account",
    ]);
  });

  it("when PORT is not a number, then loading stops with a message naming PORT", () => {
    expect(() => loadEnv({ PORT: "eighty", DATABASE_FILE: tmp() })).toThrow(EnvError);
    expect(() => loadEnv({ PORT: "eighty", DATABASE_FILE: tmp() })).toThrow(/PORT/);
  });

  it("when REPORT_COLUMNS_MB is not a whole number of megabytes, then loading stops and names it; unset, left to the report cache's default", () => {
    expect(() => loadEnv({ REPORT_COLUMNS_MB: "lots", DATABASE_FILE: tmp() })).toThrow(/REPORT_COLUMNS_MB must be a whole number of megabytes/);
    expect(() => loadEnv({ REPORT_COLUMNS_MB: "-1", DATABASE_FILE: tmp() })).toThrow(/REPORT_COLUMNS_MB/);
    expect(loadEnv({ DATABASE_FILE: tmp() }).REPORT_COLUMNS_MB).toBe(undefined);
    expect(loadEnv({ REPORT_COLUMNS_MB: "0", DATABASE_FILE: tmp() }).REPORT_COLUMNS_MB).toBe(0);
  });

  it("when SEED_DEMO is neither true nor false, then loading stops", () => {
    expect(() => loadEnv({ SEED_DEMO: "maybe", DATABASE_FILE: tmp() })).toThrow(/SEED_DEMO/);
  });

  it("when production has no BETTER_AUTH_SECRET, then loading refuses to start", () => {
    expect(() => loadEnv({ NODE_ENV: "production", DATABASE_FILE: tmp() })).toThrow(/BETTER_AUTH_SECRET is required in production/);
  });

  it("when production has no https BETTER_AUTH_URL, then loading refuses to start", () => {
    const secret = "s".repeat(40);
    expect(() => loadEnv({ NODE_ENV: "production", BETTER_AUTH_SECRET: secret, DATABASE_FILE: tmp() })).toThrow(/BETTER_AUTH_URL is required/);
    expect(() => loadEnv({ NODE_ENV: "production", BETTER_AUTH_SECRET: secret, BETTER_AUTH_URL: "http://plant.example", DATABASE_FILE: tmp() })).toThrow(
      /https/,
    );
    const ok = loadEnv({ NODE_ENV: "production", BETTER_AUTH_SECRET: secret, BETTER_AUTH_URL: "https://plant.example", DATABASE_FILE: tmp() });
    expect(ok.BETTER_AUTH_URL).toBe("https://plant.example");
  });

  it("when production is asked to seed the demo with the published password, then loading refuses", () => {
    const base = { NODE_ENV: "production", BETTER_AUTH_SECRET: "s".repeat(40), BETTER_AUTH_URL: "https://plant.example", DATABASE_FILE: tmp() };
    expect(() => loadEnv({ ...base, SEED_DEMO: "true" })).toThrow(/DEMO_PASSWORD/);
    expect(loadEnv({ ...base, SEED_DEMO: "true", DEMO_PASSWORD: "a-plant-chosen-one" }).SEED_DEMO).toBe(true);
  });

  it("when the local demo has no secret, then one is generated once and kept beside the database", () => {
    const file = tmp();
    const a = loadEnv({ DATABASE_FILE: file });
    const b = loadEnv({ DATABASE_FILE: file });
    expect(a.BETTER_AUTH_SECRET.length).toBeGreaterThanOrEqual(32);
    expect(b.BETTER_AUTH_SECRET).toBe(a.BETTER_AUTH_SECRET);
    expect(fs.readFileSync(path.join(path.dirname(file), ".auth-secret"), "utf8").trim()).toBe(a.BETTER_AUTH_SECRET);
  });

  it("when nothing is set, then the documented defaults apply", () => {
    const env = loadEnv({ DATABASE_FILE: tmp() });
    expect(env).toMatchObject({ PORT: 3000, UPLOAD_DIR: "./uploads", DEMO_PASSWORD: "strandsight-demo", BETTER_AUTH_URL: "http://localhost:3000" });
    expect(env.SEED_DEMO).toBeUndefined();
  });
});
