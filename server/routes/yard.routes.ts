import { promisify } from "node:util";
import zlib from "node:zlib";
import { yardSettingsSchema, yardSlabParamsSchema, yardSlabSchema, yardSyncSchema } from "@shared/api/yard";
import { defineRoute } from "../lib/route";
import { clientHasCurrent, etagOf, getYardSettings, updateYardSettings, yardSlab, yardSyncSet } from "../services/yard.service";
import type { Deps } from "./deps";

const gzip = promisify(zlib.gzip);

export function yardRoutes({ db }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/yard/sync",
      summary: "What a yard tablet keeps for offline use: recent and uninspected slabs, the catalogue, the caller's recent entries (ETag: 304 when unchanged)",
      tag: "yard",
      access: "defects.log",
      responses: {
        200: { description: "The set, with an ETag.", schema: yardSyncSchema },
        304: { description: "The tablet's copy (If-None-Match) is current." },
      },
      handler: async ({ req, res, user }) => {
        const text = JSON.stringify(yardSyncSet(db, user));
        const etag = etagOf(text);
        res.setHeader("ETag", etag);
        // The tablet keeps the set in IndexedDB; the browser's cache must ask every time.
        res.setHeader("Cache-Control", "private, no-cache");
        res.setHeader("Vary", "Accept-Encoding");
        if (clientHasCurrent(req.get("if-none-match"), etag)) {
          res.status(304).end();
          return;
        }
        res.status(200).type("application/json");
        // The set is JSON of a few hundred kB over the yard's weak Wi-Fi: gzip makes it about a tenth
        // (Node's own zlib, off the event loop; a reverse proxy does not compress it again).
        if (req.acceptsEncodings("gzip", "identity") === "gzip") {
          res.setHeader("Content-Encoding", "gzip");
          res.send(await gzip(text));
        } else res.send(text);
      },
    }),
    defineRoute({
      method: "get",
      path: "/yard/slabs/:slabId",
      summary: "One slab as the yard set carries it (rolled into which coils, next piece), for a slab the tablet does not hold",
      tag: "yard",
      access: "defects.log",
      params: yardSlabParamsSchema,
      responses: { 200: { description: "The slab.", schema: yardSlabSchema }, 404: { description: "No such slab." } },
      handler: ({ params }) => yardSlab(db, params.slabId),
    }),
    defineRoute({
      method: "get",
      path: "/yard/settings",
      summary: "The yard tablets' settings: how many hours of cast slabs they keep",
      tag: "yard",
      access: "plant.read",
      responses: { 200: { description: "The settings.", schema: yardSettingsSchema } },
      handler: () => getYardSettings(db),
    }),
    defineRoute({
      method: "put",
      path: "/yard/settings",
      summary: "Change the yard tablets' settings (audited)",
      tag: "yard",
      access: "setup.manage",
      body: yardSettingsSchema,
      responses: { 200: { description: "Saved.", schema: yardSettingsSchema } },
      handler: ({ body, user }) => updateYardSettings(db, body, user.id),
    }),
  ];
}
