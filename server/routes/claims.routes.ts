import path from "node:path";
import { z } from "zod";
import {
  claimCreateSchema,
  claimLinkSchema,
  claimQuerySchema,
  claimSchema,
  claimSummarySchema,
  claimUpdateSchema,
  heatHistorySchema,
  historyEditionQuerySchema,
  sendHistorySchema,
  traceQuerySchema,
  traceSchema,
} from "@shared/api/claims";
import { recordAudit } from "../services/audit.service";
import { defineRoute, type AnyRoute } from "../lib/route";
import { diskUpload, type IncomingFile } from "../middleware/uploads";
import { checkHeatOfClaim, claimExists, createClaim, getClaim, linkSlabs, listClaims, unlinkSlab, updateClaim } from "../services/claims.service";
import { heatHistory, historyWorkbook, trace, type HistoryOptions } from "../services/history.service";
import { addAttachments, ATTACHMENT_UPLOAD_REFUSALS, checkAttachmentCaps, ATTACHMENT_MAX_BYTES, ATTACHMENT_MAX_FILES } from "../services/attachments.service";
import type { Deps } from "./deps";
import { languageOf, type Language } from "@shared/i18n/languages";
import { requestLanguage, translator } from "../lib/i18n";

const XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet";
const idParams = z.object({ id: z.coerce.number().int().positive() });
const heatParams = z.object({ heatNo: z.string().trim().min(1).max(40) });
const upload = diskUpload({ field: "files", maxFiles: ATTACHMENT_MAX_FILES, maxBytes: ATTACHMENT_MAX_BYTES, multiple: true });
const one = { 200: { description: "The claim as it now stands.", schema: claimSchema } };
const safe = (x: string) => x.replace(/[^A-Za-z0-9_-]/g, "_");
const fileName = (heatNo: string, edition: HistoryOptions["edition"] = "internal", claimNo?: string) =>
  `strandsight-heat-${safe(heatNo)}-history-${edition === "customer" ? `${claimNo ? `claim-${safe(claimNo)}-` : ""}customer` : "internal"}-${new Date().toISOString().slice(0, 10)}.xlsx`;
/** The query's edition as the service takes it; who prepares it is the signed-in user's name. */
const editionOf = (q: z.output<typeof historyEditionQuerySchema>, preparedBy: string): HistoryOptions => ({
  edition: q.edition,
  sections: q.sections,
  claimId: q.claim,
  preparedBy,
});

export function claimRoutes({ db, env, mailer }: Deps): AnyRoute[] {
  const uploadDir = path.resolve(env.UPLOAD_DIR);
  const attachDir = path.join(uploadDir, "attachments");
  const workbook = (heatNo: string, by: string, opts: HistoryOptions = {}, language: Language | null = null) => {
    const hist = heatHistory(db, heatNo, { ...opts, language });
    return historyWorkbook(db, hist, { baseUrl: env.BETTER_AUTH_URL, uploadDir, by, language }).then((buf) => ({ buf, hist }));
  };
  /**
   * The language a history sent by mail is written in: the one its recipients chose when every
   * address is a person here with the same language, else English (the customer has no account).
   */
  const recipientsLanguage = (to: string[]): Language => {
    const chosen = new Set(
      to.map((a) =>
        languageOf(db.$client.prepare("select language from user where lower(email) = lower(?)").pluck().get(a.trim()) as string | null | undefined),
      ),
    );
    const [only] = [...chosen];
    return chosen.size === 1 && only ? only : "en";
  };
  return [
    defineRoute({
      method: "get",
      path: "/trace",
      summary: "Trace a coil, plate, slab or heat id to its slab and heat, with the heat's whole history",
      tag: "claims",
      access: "claims.read",
      query: traceQuerySchema,
      responses: { 200: { description: "The chain and the history.", schema: traceSchema }, 404: { description: "No such id on record." } },
      handler: ({ query }) => trace(db, query.q),
    }),
    defineRoute({
      method: "get",
      path: "/heats/:heatNo/history",
      summary:
        "A heat's history as JSON (the printable view): the internal edition (everything, the audit trail in words) or the customer edition (sections chosen, nothing internal); claim= adds the claim's cover page",
      tag: "claims",
      access: "history.export",
      params: heatParams,
      query: historyEditionQuerySchema,
      responses: {
        200: { description: "The history.", schema: heatHistorySchema },
        400: { description: "The claim has no slab of this heat, or an unknown section." },
      },
      handler: ({ params, query, user }) => heatHistory(db, params.heatNo, editionOf(query, user.name)),
    }),
    defineRoute({
      method: "get",
      path: "/heats/:heatNo/history.xlsx",
      summary:
        "The heat history workbook. Internal edition: Summary, Chemistry, Casting conditions, Process samples, Slabs, Defects (thumbnails), Causes, Investigations, Claims, Audit trail (in words). Customer edition: a Cover (with claim=), Summary and the sections chosen",
      tag: "claims",
      access: "history.export",
      params: heatParams,
      query: historyEditionQuerySchema,
      responses: {
        200: { description: "The workbook.", contentType: XLSX },
        400: { description: "The claim has no slab of this heat, or an unknown section." },
      },
      handler: async ({ params, query, req, res, user }) => {
        const { buf, hist } = await workbook(params.heatNo, `${user.name} <${user.email}>`, editionOf(query, user.name), requestLanguage(req));
        const heatNo = hist.heat.heatNo;
        recordAudit(db, {
          userId: user.id,
          action: "heat.history.export",
          entity: "heat",
          entityId: heatNo,
          after: { edition: hist.edition.kind, sections: hist.edition.sections, claim: hist.edition.cover?.claimNo ?? null },
        });
        res.setHeader("Content-Type", XLSX);
        res.setHeader("Content-Disposition", `attachment; filename="${fileName(heatNo, hist.edition.kind, hist.edition.cover?.claimNo)}"`);
        res.send(buf);
      },
    }),
    defineRoute({
      method: "get",
      path: "/claims",
      summary: "Claims, newest first (status, or q: claim no, customer, product or defect)",
      tag: "claims",
      access: "claims.read",
      query: claimQuerySchema,
      responses: { 200: { description: "Claims.", schema: z.object({ items: z.array(claimSummarySchema) }) } },
      handler: ({ query }) => ({ items: listClaims(db, query) }),
    }),
    defineRoute({
      method: "post",
      path: "/claims",
      summary: "Record a customer claim; its coils and plates are traced to slabs and linked",
      tag: "claims",
      access: "claims.manage",
      body: claimCreateSchema,
      status: 201,
      responses: { 201: { description: "Recorded.", schema: claimSchema }, 409: { description: "The claim number is taken." } },
      handler: ({ body, user }) => createClaim(db, user, body),
    }),
    defineRoute({
      method: "get",
      path: "/claims/:id",
      summary: "One claim with its slabs, heats, attachments and history",
      tag: "claims",
      access: "claims.read",
      params: idParams,
      responses: one,
      handler: ({ params }) => getClaim(db, params.id),
    }),
    defineRoute({
      method: "patch",
      path: "/claims/:id",
      summary: "Change a claim (status, products, notes…)",
      tag: "claims",
      access: "claims.manage",
      params: idParams,
      body: claimUpdateSchema,
      responses: one,
      handler: ({ params, body, user }) => updateClaim(db, user, params.id, body),
    }),
    defineRoute({
      method: "post",
      path: "/claims/:id/slabs",
      summary: "Link slabs (by id) or coils / plates (through the trace) to a claim",
      tag: "claims",
      access: "claims.manage",
      params: idParams,
      body: claimLinkSchema,
      responses: one,
      handler: ({ params, body, user }) => linkSlabs(db, user, params.id, body),
    }),
    defineRoute({
      method: "delete",
      path: "/claims/:id/slabs/:slabId",
      summary: "Unlink a slab from a claim",
      tag: "claims",
      access: "claims.manage",
      params: idParams.extend({ slabId: z.string().trim().min(1).max(40) }),
      responses: one,
      handler: ({ params, user }) => unlinkSlab(db, user, params.id, params.slabId),
    }),
    defineRoute({
      method: "post",
      path: "/claims/:id/attachments",
      summary: "Attach files to a claim (PDF, Office, images, CSV, text; up to 5 of 20 MB each)",
      tag: "claims",
      access: "claims.manage",
      params: idParams,
      upload: {
        middleware: upload,
        // No such claim (404) is said before the files are read.
        precheck: ({ params, user }) => {
          claimExists(db, params.id);
          checkAttachmentCaps(db.$client, "claim", params.id, user.id);
        },
        fields: { files: { type: "file", description: "One to five files." } },
      },
      responses: { ...one, ...ATTACHMENT_UPLOAD_REFUSALS, 404: { description: "No such claim." } },
      handler: async ({ params, req, user }) => {
        claimExists(db, params.id);
        await addAttachments(db, user, "claim", params.id, (req.files as IncomingFile[] | undefined) ?? [], attachDir, () => claimExists(db, params.id));
        return getClaim(db, params.id);
      },
    }),
    defineRoute({
      method: "post",
      path: "/claims/:id/send-history",
      summary:
        "E-mail a linked heat's history workbook to recipients — the customer edition with the claim's cover page unless edition=internal (claims officers; queued; logged on the claim)",
      tag: "claims",
      access: "claims.manage",
      params: idParams,
      body: sendHistorySchema,
      status: 202,
      responses: { 202: { description: "Queued.", schema: z.object({ messageId: z.number().int(), claim: claimSchema }) } },
      handler: async ({ params, body, user }) => {
        const claim = claimExists(db, params.id);
        checkHeatOfClaim(db, params.id, body.heatNo);
        const heatNo = body.heatNo.trim().toUpperCase();
        const language = recipientsLanguage(body.to);
        const t = translator(language);
        const { buf, hist } = await workbook(
          heatNo,
          `${user.name} <${user.email}>`,
          {
            edition: body.edition,
            sections: body.sections,
            claimId: params.id,
            preparedBy: user.name,
          },
          language,
        );
        // English lower-cases the section names inside the sentence; German keeps its nouns' capitals.
        const contents = hist.edition.sections.map((x) => {
          const word = t(`common:terms.historySections.${x}`);
          return language === "de" ? word : word.toLowerCase();
        });
        const listed =
          contents.length > 1
            ? t("server:mail.heatHistory.list", { items: contents.slice(0, -1).join(", "), last: contents[contents.length - 1] })
            : (contents[0] ?? t("server:mail.heatHistory.theSummary"));
        const customer = hist.edition.kind === "customer";
        const messageId = db.transaction(() => {
          const id = mailer.enqueue({
            kind: "heat_history",
            to: body.to,
            subject: t("server:mail.heatHistory.subject", { claim: claim.claim_no, heat: heatNo }),
            // The customer edition's mail names no address inside the plant.
            text: `${body.message ? `${body.message}\n\n` : ""}${t("server:mail.heatHistory.attached", { heat: heatNo, claim: claim.claim_no, customer: claim.customer, listed })}${customer ? "" : `\n\n${t("server:mail.heatHistory.internal")}`}\n\n${t("server:mail.heatHistory.sentBy", { name: user.name })}${customer ? "" : `\n\n—\nStrandsight · ${env.BETTER_AUTH_URL}`}`,
            attachments: [{ filename: fileName(heatNo, hist.edition.kind, claim.claim_no), contentType: XLSX, content: buf }],
          })!;
          recordAudit(db, {
            userId: user.id,
            action: "claim.history.sent",
            entity: "claim",
            entityId: params.id,
            after: { heatNo, to: body.to, outboxId: id, bytes: buf.length, edition: hist.edition.kind, sections: hist.edition.sections },
          });
          return id;
        });
        return { messageId, claim: getClaim(db, params.id) };
      },
    }),
  ];
}
