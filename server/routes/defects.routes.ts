import path from "node:path";
import { z } from "zod";
import {
  catalogueSchema,
  defectCategoryInputSchema,
  defectCategoryUpdateSchema,
  defectCreatedSchema,
  defectCreateSchema,
  defectListQuerySchema,
  defectListSchema,
  defectReviewSchema,
  defectSchema,
  defectTypeInputSchema,
  defectTypeUpdateSchema,
  defectUpdateSchema,
  PHOTO_MAX_BYTES,
  PHOTO_MAX_FILES,
  PHOTO_MAX_PER_DEFECT,
  PHOTO_MAX_PER_USER_HOUR,
  photosUploadedSchema,
} from "@shared/api/defects";
import { badRequest, said } from "../lib/http-error";
import { defineRoute } from "../lib/route";
import { diskUpload, type IncomingFile } from "../middleware/uploads";
import { createDefectCategory, createDefectType, getCatalogue, updateDefectCategory, updateDefectType } from "../services/catalogue.service";
import {
  addPhotos,
  createDefect,
  deleteDefect,
  deletePhoto,
  getDefect,
  listDefects,
  photoFile,
  precheckPhotos,
  reviewDefect,
  updateDefect,
} from "../services/defects.service";
import type { Deps } from "./deps";

const idParams = z.object({ id: z.coerce.number().int().positive() });
const photoParams = z.object({ id: z.string().uuid("Not a photo id.") });
const codeParams = z.object({ code: z.string().trim().min(1).max(16) });

const photoUpload = diskUpload({ field: "photos", maxFiles: PHOTO_MAX_FILES, maxBytes: PHOTO_MAX_BYTES, multiple: true, maxFields: 5 });

export function defectRoutes({ db, env, events }: Deps) {
  const uploadDir = path.resolve(env.UPLOAD_DIR);
  const servePhoto = (kind: "display" | "thumb") =>
    defineRoute({
      method: "get",
      path: kind === "display" ? "/photos/:id" : "/photos/:id/thumb",
      summary: kind === "display" ? "A defect photo (display size, WebP)" : "A defect photo's thumbnail (JPEG, ≈ 320 px)",
      tag: "defects",
      access: "plant.read",
      params: photoParams,
      responses: { 200: { description: "The image.", contentType: kind === "display" ? "image/webp" : "image/jpeg" }, 404: { description: "No such photo." } },
      handler: ({ params, req, res }) => {
        const f = photoFile(db, params.id, kind);
        // Photos never change under their id; only signed-in users get them, so caches stay private.
        res.setHeader("Cache-Control", "private, max-age=31536000, immutable");
        res.setHeader("ETag", f.etag);
        res.setHeader("X-Content-Type-Options", "nosniff");
        if (req.headers["if-none-match"] === f.etag) {
          res.status(304).end();
          return;
        }
        res.type(f.mime);
        return new Promise<void>((resolve, reject) =>
          res.sendFile(f.file, { root: uploadDir, dotfiles: "deny", etag: false, lastModified: false, cacheControl: false }, (err) =>
            err ? reject(err) : resolve(),
          ),
        );
      },
    });

  return [
    defineRoute({
      method: "post",
      path: "/defects",
      summary: "Log a defect on a slab (idempotent per client_key)",
      tag: "defects",
      access: "defects.log",
      body: defectCreateSchema,
      responses: {
        201: { description: "Stored.", schema: defectCreatedSchema },
        200: { description: "This client_key was stored before: the same entry, unchanged.", schema: defectCreatedSchema },
        404: { description: "No such slab." },
      },
      handler: ({ body, user, res }) => {
        const result = createDefect(db, user, body, events);
        // Written out directly rather than with res.json(), which hashes every answer for an ETag:
        // nothing revalidates the answer to a post, and the hash was a few percent of its CPU.
        res
          .status(result.created ? 201 : 200)
          .type("application/json")
          .end(JSON.stringify(result));
      },
    }),
    defineRoute({
      method: "get",
      path: "/defects",
      summary: "Defects, paged and filtered (mine, dates, slab, heat, type, review status, least severity, with or without a cause)",
      tag: "defects",
      access: "plant.read",
      query: defectListQuerySchema,
      responses: { 200: { description: "One page.", schema: defectListSchema } },
      handler: ({ user, query }) => listDefects(db, user, query),
    }),
    defineRoute({
      method: "get",
      path: "/defects/:id",
      summary: "One defect with its photos",
      tag: "defects",
      access: "plant.read",
      params: idParams,
      responses: { 200: { description: "The defect.", schema: defectSchema }, 404: { description: "No such defect." } },
      handler: ({ params, user }) => getDefect(db, params.id, user),
    }),
    defineRoute({
      method: "patch",
      path: "/defects/:id",
      summary: "Change a defect (own and unreviewed; quality engineers always — audited)",
      tag: "defects",
      access: "defects.log",
      params: idParams,
      body: defectUpdateSchema,
      responses: { 200: { description: "Changed.", schema: defectSchema }, 403: { description: "Not yours, or already reviewed." } },
      handler: ({ params, body, user }) => updateDefect(db, user, params.id, body),
    }),
    defineRoute({
      method: "delete",
      path: "/defects/:id",
      summary: "Delete a defect (kept, marked deleted, audited)",
      tag: "defects",
      access: "defects.log",
      params: idParams,
      responses: { 200: { description: "Deleted.", schema: z.object({ id: z.number(), deleted: z.literal(true) }) } },
      handler: ({ params, user }) => deleteDefect(db, user, params.id),
    }),
    defineRoute({
      method: "post",
      path: "/defects/:id/review",
      summary: "Quality review: confirm, correct the type or severity, or reject (audited)",
      tag: "defects",
      access: "defects.review",
      params: idParams,
      body: defectReviewSchema,
      responses: { 200: { description: "Reviewed.", schema: defectSchema } },
      handler: ({ params, body, user }) => reviewDefect(db, user, params.id, body),
    }),
    defineRoute({
      method: "post",
      path: "/defects/:id/photos",
      summary: `Attach photos (JPEG, PNG, WebP or AVIF; ≤ 25 MB and 50 MP each; ${PHOTO_MAX_PER_DEFECT} per entry, ${PHOTO_MAX_PER_USER_HOUR} per person an hour)`,
      tag: "defects",
      access: "defects.log",
      params: idParams,
      upload: {
        middleware: photoUpload,
        precheck: ({ params, user }) => precheckPhotos(db, user, params.id),
        fields: {
          photos: { type: "files", description: "1–10 image files." },
          client_keys: { type: "string", description: "Comma-separated keys, one per file, made on the device; a photo sent again is stored once." },
        },
      },
      status: 201,
      responses: {
        201: { description: "Stored.", schema: photosUploadedSchema },
        403: { description: "Not yours, or already reviewed (answered before the photos are read)." },
        404: { description: "No such defect (answered before the photos are read)." },
        409: { description: "The entry has its most photos, or was reviewed or deleted while the photos arrived." },
        413: { description: "Larger than 25 MB or 50 megapixels." },
        415: { description: "Not an image Strandsight stores (HEIC is refused with a message)." },
        429: { description: "Three uploads of yours already in progress, or the hourly number of photos reached." },
        503: { description: "Busy decoding other photos (try again), or the photo store cannot be written." },
      },
      handler: async ({ params, req, user }) => {
        const files = (req.files as IncomingFile[] | undefined) ?? [];
        const keys = typeof req.body?.client_keys === "string" ? req.body.client_keys.split(",").map((k: string) => k.trim() || null) : [];
        if (keys.some((k: string | null) => k !== null && !/^[A-Za-z0-9_-]{8,64}$/.test(k))) {
          throw badRequest(said("defects.clientKeys"), { field: "client_keys" });
        }
        return addPhotos(db, uploadDir, user, params.id, files, keys);
      },
    }),
    servePhoto("display"),
    servePhoto("thumb"),
    defineRoute({
      method: "delete",
      path: "/photos/:id",
      summary: "Remove a photo from a defect (same rule as changing the defect)",
      tag: "defects",
      access: "defects.log",
      params: photoParams,
      responses: { 200: { description: "Removed.", schema: z.object({ id: z.string(), deleted: z.literal(true) }) } },
      handler: ({ params, user }) => deletePhoto(db, user, params.id),
    }),
    defineRoute({
      method: "get",
      path: "/defect-types",
      summary: "The defect catalogue (code, name, category, active), with when the caller last used each type",
      tag: "catalogue",
      access: "plant.read",
      query: z.object({
        includeRetired: z
          .enum(["true", "false"])
          .optional()
          .transform((v) => v === "true"),
      }),
      responses: { 200: { description: "The catalogue.", schema: catalogueSchema } },
      handler: ({ user, query }) => getCatalogue(db, user.id, query.includeRetired),
    }),
    defineRoute({
      method: "post",
      path: "/defect-types",
      summary: "Add a defect type",
      tag: "catalogue",
      access: "catalogue.manage",
      body: defectTypeInputSchema,
      responses: { 201: { description: "Added.", schema: z.object({ id: z.number(), code: z.string() }) }, 409: { description: "The code is taken." } },
      handler: ({ body, user }) => createDefectType(db, body, user.id),
    }),
    defineRoute({
      method: "patch",
      path: "/defect-types/:code",
      summary: "Rename, recategorise, retire or reactivate a defect type",
      tag: "catalogue",
      access: "catalogue.manage",
      params: codeParams,
      body: defectTypeUpdateSchema,
      responses: { 200: { description: "Saved.", schema: z.object({ code: z.string() }).passthrough() } },
      handler: ({ params, body, user }) => updateDefectType(db, params.code, body, user.id),
    }),
    defineRoute({
      method: "post",
      path: "/defect-categories",
      summary: "Add a defect category",
      tag: "catalogue",
      access: "catalogue.manage",
      body: defectCategoryInputSchema,
      responses: { 201: { description: "Added.", schema: z.object({ id: z.number(), code: z.string() }) }, 409: { description: "The code is taken." } },
      handler: ({ body, user }) => createDefectCategory(db, body, user.id),
    }),
    defineRoute({
      method: "patch",
      path: "/defect-categories/:code",
      summary: "Rename, reorder, retire or reactivate a defect category",
      tag: "catalogue",
      access: "catalogue.manage",
      params: codeParams,
      body: defectCategoryUpdateSchema,
      responses: { 200: { description: "Saved.", schema: z.object({ code: z.string() }).passthrough() } },
      handler: ({ params, body, user }) => updateDefectCategory(db, params.code, body, user.id),
    }),
  ];
}
