import path from "node:path";
import { z } from "zod";
import {
  actionCreateSchema,
  actionUpdateSchema,
  closeInvestigationSchema,
  hypothesisCreateSchema,
  hypothesisUpdateSchema,
  investigationCreateSchema,
  investigationQuerySchema,
  investigationSchema,
  investigationSummarySchema,
  investigationUpdateSchema,
  participantsSchema,
  personSchema,
  subjectsAddSchema,
} from "@shared/api/investigations";
import { can } from "@shared/roles";
import { forbidden, said } from "../lib/http-error";
import { defineRoute, type AnyRoute } from "../lib/route";
import { diskUpload, type IncomingFile } from "../middleware/uploads";
import {
  addAction,
  addHypothesis,
  addInvestigationParticipants,
  addInvestigationSubjects,
  closeInvestigation,
  createInvestigation,
  getInvestigation,
  investigationForOpen,
  listInvestigations,
  people,
  updateAction,
  updateHypothesis,
  updateInvestigation,
} from "../services/investigations.service";
import {
  addAttachments,
  ATTACHMENT_UPLOAD_REFUSALS,
  checkAttachmentCaps,
  ATTACHMENT_MAX_BYTES,
  ATTACHMENT_MAX_FILES,
  attachmentFile,
} from "../services/attachments.service";
import type { Deps } from "./deps";

const idParams = z.object({ id: z.coerce.number().int().positive() });
const hypParams = idParams.extend({ hid: z.coerce.number().int().positive() });
const actParams = idParams.extend({ aid: z.coerce.number().int().positive() });
const upload = diskUpload({ field: "files", maxFiles: ATTACHMENT_MAX_FILES, maxBytes: ATTACHMENT_MAX_BYTES, multiple: true });
const one = { 200: { description: "The investigation as it now stands.", schema: investigationSchema } };

export function investigationRoutes({ db, env, notify }: Deps): AnyRoute[] {
  const dir = path.join(path.resolve(env.UPLOAD_DIR), "attachments");
  const base = { tag: "investigations" } as const;
  return [
    defineRoute({
      ...base,
      method: "get",
      path: "/investigations",
      summary: "Investigations with their status and open / overdue actions (status=active: not closed)",
      access: "investigations.read",
      query: investigationQuerySchema,
      responses: { 200: { description: "The list.", schema: z.object({ items: z.array(investigationSummarySchema) }) } },
      handler: ({ query }) => ({ items: listInvestigations(db, query) }),
    }),
    defineRoute({
      ...base,
      method: "get",
      path: "/investigations/people",
      summary: "People who can own actions or follow investigations",
      access: "investigations.read",
      responses: { 200: { description: "People.", schema: z.object({ people: z.array(personSchema) }) } },
      handler: () => ({ people: people(db) }),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations",
      summary: "Open an investigation on defects and/or heats",
      access: "investigations.manage",
      body: investigationCreateSchema,
      status: 201,
      responses: { 201: { description: "Opened.", schema: investigationSchema } },
      handler: ({ body, user }) => createInvestigation(db, user, body),
    }),
    defineRoute({
      ...base,
      method: "get",
      path: "/investigations/:id",
      summary: "One investigation in full",
      access: "investigations.read",
      params: idParams,
      responses: one,
      handler: ({ params }) => getInvestigation(db, params.id),
    }),
    defineRoute({
      ...base,
      method: "patch",
      path: "/investigations/:id",
      summary: "Change the title, problem statement, owner or status (open / in_progress)",
      access: "investigations.manage",
      params: idParams,
      body: investigationUpdateSchema,
      responses: one,
      handler: ({ params, body, user }) => updateInvestigation(db, user, params.id, body),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations/:id/subjects",
      summary: "Add defects or heats to an investigation",
      access: "investigations.manage",
      params: idParams,
      body: subjectsAddSchema,
      responses: one,
      handler: ({ params, body, user }) => addInvestigationSubjects(db, user, params.id, body),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations/:id/participants",
      summary: "Add people who follow the investigation (they are told when it closes)",
      access: "investigations.manage",
      params: idParams,
      body: participantsSchema,
      responses: one,
      handler: ({ params, body, user }) => addInvestigationParticipants(db, user, params.id, body.userIds),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations/:id/hypotheses",
      summary: "Add a hypothesis, optionally naming a cause tag",
      access: "investigations.manage",
      params: idParams,
      body: hypothesisCreateSchema,
      responses: one,
      handler: ({ params, body, user }) => addHypothesis(db, user, params.id, body),
    }),
    defineRoute({
      ...base,
      method: "patch",
      path: "/investigations/:id/hypotheses/:hid",
      summary: "Mark a hypothesis supported or ruled out, or reword it",
      access: "investigations.manage",
      params: hypParams,
      body: hypothesisUpdateSchema,
      responses: one,
      handler: ({ params, body, user }) => updateHypothesis(db, user, params.id, params.hid, body),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations/:id/actions",
      summary: "Add an action with its owner and due date (the owner is e-mailed)",
      access: "investigations.manage",
      params: idParams,
      body: actionCreateSchema,
      responses: one,
      handler: ({ params, body, user }) => addAction(db, user, notify, params.id, body),
    }),
    defineRoute({
      ...base,
      method: "patch",
      path: "/investigations/:id/actions/:aid",
      summary: "Change an action's status, due date, owner (the new owner is e-mailed) or wording",
      access: "investigations.manage",
      params: actParams,
      body: actionUpdateSchema,
      responses: one,
      handler: ({ params, body, user }) => updateAction(db, user, notify, params.id, params.aid, body),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations/:id/close",
      summary: "Close with the confirmed cause and a closure note (actions still open are cancelled with it; the participants are e-mailed)",
      access: "investigations.manage",
      params: idParams,
      body: closeInvestigationSchema,
      responses: one,
      handler: ({ params, body, user }) => closeInvestigation(db, user, notify, params.id, body),
    }),
    defineRoute({
      ...base,
      method: "post",
      path: "/investigations/:id/attachments",
      summary: "Attach files (PDF, Office, images, CSV, text; up to 5 of 20 MB each)",
      access: "investigations.manage",
      params: idParams,
      upload: {
        middleware: upload,
        // No such investigation (404) or a closed one (409) is said before the files are read.
        precheck: ({ params, user }) => {
          investigationForOpen(db, params.id);
          checkAttachmentCaps(db.$client, "investigation", params.id, user.id);
        },
        fields: { files: { type: "file", description: "One to five files." } },
      },
      responses: { ...one, ...ATTACHMENT_UPLOAD_REFUSALS, 404: { description: "No such investigation." } },
      handler: async ({ params, req, user }) => {
        investigationForOpen(db, params.id);
        await addAttachments(db, user, "investigation", params.id, (req.files as IncomingFile[] | undefined) ?? [], dir, () =>
          investigationForOpen(db, params.id),
        );
        return getInvestigation(db, params.id);
      },
    }),
    defineRoute({
      ...base,
      method: "get",
      path: "/attachments/:id",
      summary: "Download an attachment (investigation: investigations.read; claim: claims.read)",
      access: "signed-in",
      params: z.object({ id: z.string().uuid("Not an attachment id.") }),
      responses: { 200: { description: "The file.", contentType: "application/octet-stream" }, 403: { description: "Not open to your role." } },
      handler: async ({ params, res, user }) => {
        const a = attachmentFile(db, params.id, dir);
        const need = a.ownerKind === "claim" ? "claims.read" : "investigations.read";
        if (!can(user.roles, need)) throw forbidden(said("investigations.attachmentsClosed"));
        res.setHeader("Content-Type", a.mime);
        res.setHeader("Content-Disposition", `attachment; filename="${a.name.replace(/[^\x20-\x7e]/g, "_")}"; filename*=UTF-8''${encodeURIComponent(a.name)}`);
        res.setHeader("Cache-Control", "private, max-age=3600");
        await new Promise<void>((resolve, reject) => res.sendFile(a.file, (err) => (err ? reject(err) : resolve())));
      },
    }),
  ];
}
