import multer from "multer";
import { z } from "zod";
import { IMPORT_MAX_BYTES, importKindSchema, importQuerySchema, importResultSchema, importRunSchema } from "@shared/api/imports";
import { readTable, tableFromJson } from "../import/read-table";
import { HttpError } from "../lib/http-error";
import { defineRoute } from "../lib/route";
import { buildTemplate, listImportRuns, runImport, sha256 } from "../services/import.service";
import type { Deps } from "./deps";

const kindParams = z.object({ kind: importKindSchema });

// In memory: the file is read, checked and either imported in one transaction or refused; it is never kept.
const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: IMPORT_MAX_BYTES, files: 1, fields: 5 } });

export function importRoutes({ db }: Deps) {
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
        middleware: upload.single("file"),
        fields: { file: { type: "file", description: "An .xlsx workbook (first sheet) or a CSV file, at most 20 MB." } },
      },
      status: 201,
      responses: {
        201: { description: "Imported (or, with dryRun, 200 with the preview).", schema: importResultSchema },
        413: { description: "The file is larger than 20 MB." },
        415: { description: "Not an .xlsx workbook or a CSV file (judged by content)." },
        422: { description: "Rows with errors: nothing was imported; details holds the preview with every error." },
      },
      handler: async ({ req, res, params, query, user }) => {
        const file = req.file;
        if (!file) throw new HttpError(400, "no_file", "Choose a file to import (form field “file”).");
        const table = await readTable(file.buffer);
        const result = runImport(db, {
          kind: params.kind,
          table,
          dryRun: query.dryRun,
          fileName: file.originalname.slice(0, 200),
          sha256: sha256(file.buffer),
          source: "upload",
          by: { userId: user.id },
        });
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
      summary: "Level-2 feed: a JSON array of rows with the import's keys (API token; dryRun=true: check only)",
      tag: "ingest",
      access: "ingest.token",
      params: kindParams,
      query: importQuerySchema,
      body: z.array(z.record(z.string(), z.unknown())).max(200_000),
      status: 201,
      responses: {
        201: { description: "Imported; repeating the call changes nothing (all unchanged).", schema: importResultSchema },
        401: { description: "No valid, unrevoked API token." },
        422: { description: "Rows with errors: nothing was imported." },
      },
      handler: ({ req, res, params, query, body }) => {
        const token = req.apiToken!;
        const result = runImport(db, {
          kind: params.kind,
          table: tableFromJson(body),
          dryRun: query.dryRun,
          fileName: null,
          sha256: null,
          source: "ingest",
          by: { tokenId: token.id, actor: `token:${token.name}` },
        });
        res.status(query.dryRun ? 200 : 201).json(result);
      },
    }),
  ];
}
