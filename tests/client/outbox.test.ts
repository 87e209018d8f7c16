import "fake-indexeddb/auto";
import { afterEach, describe, expect, it } from "vitest";
import type { Defect, DefectCreate } from "../../shared/api/defects";
import { ApiError } from "../../src/lib/api-client";
import { createOutbox, retryDelayMs, type OutboxTransport } from "../../src/features/defects/offline/outbox";

/**
 * The yard's offline queue, on a real IndexedDB implementation (fake-indexeddb) with a scripted
 * transport: what it sends, in which order, when it retries, when it stops, and that an entry
 * leaves the store only once the defect and every photo are confirmed.
 */

let dbCounter = 0;
const opened: { close: () => Promise<void> }[] = [];
afterEach(async () => {
  await Promise.all(opened.splice(0).map((o) => o.close()));
});

type Call = { kind: "defect"; key: string } | { kind: "photo"; defectId: number; key: string };

/** A transport whose answers are scripted per call; unscripted calls succeed. */
function scriptedTransport(script: { defect?: (Error | null)[]; photo?: (Error | null)[] } = {}) {
  const calls: Call[] = [];
  let nextId = 100;
  const defectAnswers = [...(script.defect ?? [])];
  const photoAnswers = [...(script.photo ?? [])];
  const transport: OutboxTransport = {
    async createDefect(body) {
      calls.push({ kind: "defect", key: body.client_key });
      const err = defectAnswers.shift();
      if (err) throw err;
      const id = nextId++;
      // The server answers with the stored record; only what this test reads of it is filled in.
      return { id, defect: { id, slabId: body.slab_id, clientKey: body.client_key } as unknown as Defect };
    },
    async uploadPhoto(defectId, photo, onProgress) {
      calls.push({ kind: "photo", defectId, key: photo.key });
      onProgress(0.5);
      const err = photoAnswers.shift();
      if (err) throw err;
      onProgress(1);
      return { id: `ph-${photo.key}` };
    },
  };
  return { transport, calls };
}

function makeOutbox(transport: OutboxTransport, opts: { dbName?: string; online?: () => boolean; clock?: { t: number } } = {}) {
  const clock = opts.clock ?? { t: 1_000_000 };
  const outbox = createOutbox({ transport, dbName: opts.dbName ?? `outbox-test-${++dbCounter}`, now: () => clock.t, random: () => 0.5, isOnline: opts.online });
  opened.push(outbox);
  return { outbox, clock };
}

const body = (key: string, over: Partial<DefectCreate> = {}): DefectCreate => ({
  slab_id: "L260001-101",
  type_code: "LFC",
  face: "inner",
  position_along_mm: 1200,
  position_across_mm: 400,
  severity: 2,
  disposition: "scarf",
  client_key: key,
  found_at: "2026-11-30T08:00:00.000Z",
  ...over,
});
const summary = { typeCode: "LFC", typeName: "Longitudinal facial crack", severity: 2, face: "inner", alongMm: 1200, acrossMm: 400 };
const photo = (key: string) => ({ key, name: `${key}.jpg`, type: "image/jpeg", blob: new Blob([`jpeg-${key}`], { type: "image/jpeg" }) });
const networkDown = () => new ApiError(0, "network", "No connection to the server.");

describe("the yard's outbox", () => {
  it("when an entry with two photos is sent, then the defect goes first, each photo with its own key, and the entry leaves the store", async () => {
    const { transport, calls } = scriptedTransport();
    const { outbox } = makeOutbox(transport);
    const sent: number[] = [];
    outbox.onSent((e) => sent.push(e.defectId));
    await outbox.start("u1");
    await outbox.add({
      clientKey: "entry-0001",
      userId: "u1",
      slabId: "L260001-101",
      body: body("entry-0001"),
      summary,
      photos: [photo("photo-a001"), photo("photo-b001")],
    });
    expect(outbox.getSnapshot().entries).toHaveLength(1);
    await outbox.flush();
    expect(calls).toEqual([
      { kind: "defect", key: "entry-0001" },
      { kind: "photo", defectId: 100, key: "photo-a001" },
      { kind: "photo", defectId: 100, key: "photo-b001" },
    ]);
    expect(sent).toEqual([100]);
    expect(outbox.getSnapshot().entries).toEqual([]);
  });

  it("when the network fails, then the entry stays, waits its pause, and is sent on a later pass", async () => {
    const { transport, calls } = scriptedTransport({ defect: [networkDown()] });
    const { outbox, clock } = makeOutbox(transport);
    await outbox.start("u1");
    await outbox.add({ clientKey: "entry-0002", userId: "u1", slabId: "S", body: body("entry-0002"), summary, photos: [] });
    // Adding starts a pass by itself; wait for it without forcing another.
    await outbox.idle();
    const [e] = outbox.getSnapshot().entries;
    expect(e).toMatchObject({ attempts: 1, state: "retrying", defectId: null, lastError: { status: 0 } });
    expect(e!.nextAttemptAt).toBe(clock.t + retryDelayMs(1, () => 0.5));
    // Before the pause is over, a timed pass leaves it alone.
    clock.t += 1_000;
    await outbox.sendDue();
    expect(calls).toHaveLength(1);
    clock.t += 1_500;
    await outbox.sendDue();
    expect(calls).toHaveLength(2);
    expect(outbox.getSnapshot().entries).toEqual([]);
  });

  it("when the device is offline, then nothing is attempted and the entry waits", async () => {
    let online = false;
    const { transport, calls } = scriptedTransport();
    const { outbox } = makeOutbox(transport, { online: () => online });
    await outbox.start("u1");
    await outbox.add({ clientKey: "entry-0003", userId: "u1", slabId: "S", body: body("entry-0003"), summary, photos: [photo("photo-c001")] });
    await outbox.flush();
    expect(calls).toEqual([]);
    expect(outbox.getSnapshot()).toMatchObject({ online: false, entries: [{ state: "waiting", attempts: 0 }] });
    online = true;
    outbox.wake();
    await outbox.flush();
    expect(calls.map((c) => c.kind)).toEqual(["defect", "photo"]);
    expect(outbox.getSnapshot().entries).toEqual([]);
  });

  it("when the server refuses the defect (4xx), then it is not retried until the entry is changed, and keeps its key", async () => {
    const refused = new ApiError(400, "retired_type", "The defect type LFC is retired; choose another.");
    const { transport, calls } = scriptedTransport({ defect: [refused] });
    const { outbox, clock } = makeOutbox(transport);
    await outbox.start("u1");
    await outbox.add({ clientKey: "entry-0004", userId: "u1", slabId: "S", body: body("entry-0004"), summary, photos: [] });
    await outbox.flush();
    expect(outbox.getSnapshot().entries[0]).toMatchObject({ state: "blocked", blocked: { status: 400, code: "retired_type" } });
    clock.t += 10 * 60_000;
    await outbox.sendDue();
    await outbox.flush();
    expect(calls).toHaveLength(1);
    await outbox.update("entry-0004", body("entry-0004", { type_code: "SCB" }), { ...summary, typeCode: "SCB" });
    await outbox.flush();
    expect(calls).toEqual([
      { kind: "defect", key: "entry-0004" },
      { kind: "defect", key: "entry-0004" },
    ]);
    expect(outbox.getSnapshot().entries).toEqual([]);
  });

  it("when the defect is stored but a photo upload drops, then a reopened outbox sends only the photo", async () => {
    const dbName = `outbox-test-${++dbCounter}`;
    const first = scriptedTransport({ photo: [networkDown()] });
    const a = makeOutbox(first.transport, { dbName });
    await a.outbox.start("u1");
    await a.outbox.add({ clientKey: "entry-0005", userId: "u1", slabId: "S", body: body("entry-0005"), summary, photos: [photo("photo-d001")] });
    await a.outbox.idle();
    expect(a.outbox.getSnapshot().entries[0]).toMatchObject({ defectId: 100, state: "retrying" });
    await a.outbox.close();

    // The tab was closed; the next page opens the same store.
    const second = scriptedTransport();
    const b = makeOutbox(second.transport, { dbName });
    await b.outbox.start("u1");
    await b.outbox.flush();
    expect(second.calls).toEqual([{ kind: "photo", defectId: 100, key: "photo-d001" }]);
    expect(b.outbox.getSnapshot().entries).toEqual([]);
  });

  it("when one photo is refused, then the others still go, and the entry waits until that photo is removed", async () => {
    const heic = new ApiError(415, "unsupported_image", "HEIC photos cannot be read; use JPEG, PNG or WebP.");
    const { transport, calls } = scriptedTransport({ photo: [heic] });
    const { outbox } = makeOutbox(transport);
    await outbox.start("u1");
    await outbox.add({
      clientKey: "entry-0006",
      userId: "u1",
      slabId: "S",
      body: body("entry-0006"),
      summary,
      photos: [photo("photo-e001"), photo("photo-e002")],
    });
    await outbox.flush();
    expect(calls.map((c) => c.kind === "photo" && c.key)).toEqual([false, "photo-e001", "photo-e002"]);
    const [e] = outbox.getSnapshot().entries;
    expect(e).toMatchObject({ state: "blocked", blocked: { status: 415, photoKey: "photo-e001" } });
    expect(e!.photos.map((p) => [p.key, p.photoId, p.problem?.status ?? null])).toEqual([
      ["photo-e001", null, 415],
      ["photo-e002", "ph-photo-e002", null],
    ]);
    await outbox.removePhoto("entry-0006", "photo-e001");
    await outbox.flush();
    expect(outbox.getSnapshot().entries).toEqual([]);
    expect(calls).toHaveLength(3);
  });

  it("when the session has ended (401), then sending stops until the user is started again", async () => {
    const { transport, calls } = scriptedTransport({ defect: [new ApiError(401, "unauthenticated", "Sign in.")] });
    const { outbox } = makeOutbox(transport);
    await outbox.start("u1");
    await outbox.add({ clientKey: "entry-0007", userId: "u1", slabId: "S", body: body("entry-0007"), summary, photos: [] });
    await outbox.add({ clientKey: "entry-0008", userId: "u1", slabId: "S", body: body("entry-0008"), summary, photos: [] });
    await outbox.flush();
    expect(calls).toHaveLength(1);
    expect(outbox.getSnapshot()).toMatchObject({ signedOut: true });
    expect(outbox.getSnapshot().entries.map((e) => e.state)).toEqual(["signed-out", "signed-out"]);
    await outbox.start("u1");
    await outbox.flush();
    expect(calls.map((c) => c.kind === "defect" && c.key)).toEqual(["entry-0007", "entry-0007", "entry-0008"]);
    expect(outbox.getSnapshot().entries).toEqual([]);
  });

  it("when another user's entries wait on the tablet, then they are counted but not sent under this user", async () => {
    const { transport, calls } = scriptedTransport();
    const { outbox } = makeOutbox(transport);
    await outbox.start("u2");
    await outbox.add({ clientKey: "entry-0009", userId: "u1", slabId: "S", body: body("entry-0009"), summary, photos: [] });
    await outbox.flush();
    expect(calls).toEqual([]);
    expect(outbox.getSnapshot()).toMatchObject({ entries: [], otherUsersCount: 1 });
    await outbox.start("u1");
    await outbox.flush();
    expect(calls).toEqual([{ kind: "defect", key: "entry-0009" }]);
  });

  it("when an entry is discarded by the inspector, then it and its photos are gone", async () => {
    const { transport } = scriptedTransport();
    const { outbox } = makeOutbox(transport, { online: () => false });
    await outbox.start("u1");
    await outbox.add({ clientKey: "entry-0010", userId: "u1", slabId: "S", body: body("entry-0010"), summary, photos: [photo("photo-f001")] });
    expect(outbox.getSnapshot().entries[0]!.photos).toHaveLength(1);
    await outbox.discard("entry-0010");
    expect(outbox.getSnapshot().entries).toEqual([]);
  });

  it("when an entry without photos is sent, then the sent event carries the server's answer; with a photo after it, the answer is not whole and is left out", async () => {
    const { transport } = scriptedTransport();
    const { outbox } = makeOutbox(transport);
    const sent: { key: string; defect: { id: number; clientKey: string } | null }[] = [];
    outbox.onSent((e) => sent.push({ key: e.clientKey, defect: e.defect ? { id: e.defect.id, clientKey: e.defect.clientKey! } : null }));
    await outbox.start("u1");
    await outbox.add({ clientKey: "entry-0101", userId: "u1", slabId: "L260001-101", body: body("entry-0101"), summary, photos: [] });
    await outbox.flush();
    await outbox.add({ clientKey: "entry-0102", userId: "u1", slabId: "L260001-101", body: body("entry-0102"), summary, photos: [photo("photo-c001")] });
    await outbox.flush();
    expect(sent).toEqual([
      { key: "entry-0101", defect: { id: 100, clientKey: "entry-0101" } },
      { key: "entry-0102", defect: null },
    ]);
  });

  it("retry pauses double from 2 s and stop at a minute", () => {
    const mid = () => 0.5;
    expect([1, 2, 3, 4, 5, 6, 7, 12].map((n) => retryDelayMs(n, mid))).toEqual([2_000, 4_000, 8_000, 16_000, 32_000, 60_000, 60_000, 60_000]);
    expect(retryDelayMs(1, () => 0)).toBe(1_600);
    expect(retryDelayMs(1, () => 1)).toBe(2_400);
  });
});
