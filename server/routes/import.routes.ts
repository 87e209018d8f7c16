import { z } from "zod";
import { IMPORT_LIMITS, IMPORT_MAX_BYTES, importKindSchema, importQuerySchema, importResultSchema, importRunSchema } from "@shared/api/imports";
import { HttpError, said } from "../lib/http-error";
import { requestLanguage } from "../lib/i18n";
import { defineRoute } from "../lib/route";
import { diskUpload } from "../middleware/uploads";
import { buildTemplate, listImportRuns } from "../services/import.service";
import { assertTokenAllows } from "../services/tokens.service";
import type { Deps } from "./deps";

const kindParams = z.object({ kind: importKindSchema });

// Streamed to a temporary file, read and checked in an import thread, imported in one transaction or
// refused; the file is removed when the answer has gone out and never kept.
const upload = diskUpload({ field: "file", maxFiles: 1, maxBytes: IMPORT_MAX_BYTES });

const limitsText = `at most ${IMPORT_LIMITS.rows.toLocaleString("en-GB")} rows, ${IMPORT_LIMITS.columns} columns, ${IMPORT_LIMITS.cellChars.toLocaleString("en-GB")} characters per cell, ${IMPORT_LIMITS.unpackedBytes / 1024 / 1024} MB unpacked`;

export function importRoutes({ db, imports }: Deps) {
  return [
    defineRoute({
      method: "post",
      path: "/import/:kind",
      summary: "Import heats, slabs or process samples from an .xlsx or CSV file (dryRun=true: check only)",
      tag: "imports",
      access: "imports.run",
      params: kindParams,
      query: importQuerySchema,
      upload: {
        middleware: upload,
        fields: { file: { type: "file", description: `An .xlsx workbook (first sheet) or a CSV file, at most 20 MB; ${limitsText}.` } },
      },
      status: 201,
      responses: {
        201: { description: "Imported (or, with dryRun, 200 with the preview).", schema: importResultSchema },
        413: { description: `The file is larger than 20 MB, or holds more than one import may (${limitsText}), or took too long to check.` },
        415: { description: "Not an .xlsx workbook or a CSV file (judged by content)." },
        422: { description: "Rows with errors: nothing was imported; details holds the preview with every error." },
        429: { description: "Too many imports are running or waiting; try again in a minute." },
      },
      handler: async ({ req, res, params, query, user }) => {
        const file = req.file;
        if (!file) throw new HttpError(400, "no_file", said("imports.noFile"));
        const result = await imports.run(
          db,
          {
            kind: params.kind,
            dryRun: query.dryRun,
            source: "upload",
            file: file.path,
            fileName: file.originalname.slice(0, 200),
            by: { userId: user.id },
          },
          // The row errors in the requester's words (the client shows them).
          requestLanguage(req),
        );
        res.status(query.dryRun ? 200 : 201).json(result);
      },
    }),
    defineRoute({
      method: "get",
      path: "/import/templates/:kind.xlsx",
      summary: "A template workbook for the import, with a sheet describing each column and its unit",
      tag: "imports",
      access: "imports.run",
      params: kindParams,
      responses: { 200: { description: "The template.", contentType: "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet" } },
      handler: async ({ params, res }) => {
        const buf = await buildTemplate(params.kind);
        res.setHeader("Content-Type", "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet");
        res.setHeader("Content-Disposition", `attachment; filename="strandsight-${params.kind}-template.xlsx"`);
        res.send(buf);
      },
    }),
    defineRoute({
      method: "get",
      path: "/import/runs",
      summary: "The most recent imports and feed calls",
      tag: "imports",
      access: "imports.run",
      responses: { 200: { description: "Recent runs.", schema: z.object({ runs: z.array(importRunSchema) }) } },
      handler: () => ({ runs: listImportRuns(db) }),
    }),
    defineRoute({
      method: "post",
      path: "/ingest/:kind",
      summary: "Level-2 feed: a JSON array of rows with the import's keys, at most 20 MB and 200,000 items (API token; dryRun=true: check only)",
      tag: "ingest",
      access: "ingest.token",
      params: kindParams,
      query: importQuerySchema,
      status: 201,
      responses: {
        201: { description: "Imported; repeating the call changes nothing (all unchanged).", schema: importResultSchema },
        400: { description: "Not a JSON array, or an item has a key that is not one of the import's." },
        401: { description: "No valid, unrevoked API token." },
        403: { description: "The token may not send this kind of data (its scopes, chosen when it was created)." },
        413: { description: "Larger than 20 MB or more than 200,000 items." },
        415: { description: "Not sent as JSON (Content-Type: application/json)." },
        422: { description: "Rows with errors: nothing was imported." },
        429: { description: "Too many imports are running or waiting; try again in a minute." },
      },
      handler: async ({ req, res, params, query }) => {
        const token = req.apiToken!;
        // The body arrives unparsed (server/app.ts reads it only after the token was checked) and is
        // parsed in the import thread.
        if (!Buffer.isBuffer(req.body)) {
          throw new HttpError(415, "unsupported_media_type", said("imports.jsonOnly"));
        }
        const body = req.body;
        // Checked before the body was read (server/app.ts); again here, on the kind the route validated.
        assertTokenAllows(token, params.kind);
        const result = await imports.run(
          db,
          {
            kind: params.kind,
            dryRun: query.dryRun,
            source: "ingest",
            json: new Uint8Array(body.buffer, body.byteOffset, body.length),
            fileName: null,
            by: { tokenId: token.id, actor: `token:${token.name}` },
          },
          requestLanguage(req),
        );
        res.status(query.dryRun ? 200 : 201).json(result);
      },
    }),
  ];
}
