import type { ErrorRequestHandler, RequestHandler } from "express";
import type { TFunction } from "i18next";
import { ZodError } from "zod";
import { schemaMessage } from "@shared/i18n/schema-messages";
import { HttpError, said, sayIn } from "../lib/http-error";
import { requestLanguage, translator } from "../lib/i18n";
import type { Logger } from "../lib/logger";

/** File system refusals that mean the server's storage is unusable, not that the request was wrong. */
const STORAGE_TROUBLE = new Set(["EACCES", "EPERM", "EROFS", "ENOSPC", "EDQUOT"]);

/** Each issue where it is and what it says: the shared schemas' own messages in the reader's language. */
function zodDetails(err: ZodError, t: TFunction) {
  return err.issues.map((i) => ({ path: i.path.join("."), message: schemaMessage((key, options) => t(key, options), i.message) }));
}

export function apiNotFound(): RequestHandler {
  return (req, res) => {
    const route = `${req.method} ${req.originalUrl.split("?")[0]}`;
    res.status(404).json({ error: { code: "not_found", message: sayIn(said("handler.noRoute", { route }), requestLanguage(req)) } });
  };
}

/**
 * Maps every error to `{ error: { code, message, details? } }`. Known errors keep their status;
 * anything unexpected is logged and answered with a generic 500, never a stack trace.
 */
export function errorHandler(logger: Logger): ErrorRequestHandler {
  return (err, req, res, _next) => {
    // The requester's words: their chosen language, else their browser's (English when neither).
    const say = (key: string, values?: Record<string, string | number>) => sayIn(said(`handler.${key}`, values), requestLanguage(req));
    if (res.headersSent) {
      logger.error({ path: req.path, err: String(err) }, "error after response started");
      return;
    }
    if (err instanceof HttpError) {
      // A 5xx in words (store unwritable, busy) is still the server's trouble: the log keeps its cause.
      if (err.status >= 500) {
        const cause = (err as Error & { cause?: unknown }).cause;
        if (cause) logger.error({ method: req.method, path: req.path, code: err.code, err: cause }, err.message);
        else logger.warn({ method: req.method, path: req.path, code: err.code }, err.message);
      }
      const retry = (err.details as { retryAfterSeconds?: unknown } | undefined)?.retryAfterSeconds;
      if (typeof retry === "number") res.setHeader("Retry-After", String(retry));
      res.status(err.status).json({ error: { code: err.code, message: err.messageIn(requestLanguage(req)), details: err.details } });
      return;
    }
    if (err instanceof ZodError) {
      const details = zodDetails(err, translator(requestLanguage(req)));
      const first = details[0];
      res.status(400).json({
        error: {
          code: "validation_failed",
          message: first ? `${first.path ? first.path + ": " : ""}${first.message}` : say("invalid"),
          details,
        },
      });
      return;
    }
    // body-parser, multer, static-file and SQLite errors carry a status or a code of their own.
    const e = err as { type?: string; status?: number; code?: string; message?: string; field?: string };
    if (e.code === "SQLITE_CONSTRAINT_UNIQUE" || e.code === "SQLITE_CONSTRAINT_PRIMARYKEY") {
      res.status(409).json({ error: { code: "conflict", message: say("sameKey") } });
      return;
    }
    if (e.code === "SQLITE_CONSTRAINT_FOREIGNKEY") {
      res.status(409).json({ error: { code: "conflict", message: say("foreignKey") } });
      return;
    }
    if (e.status === 404 || e.code === "ENOENT") {
      res.status(404).json({ error: { code: "not_found", message: say("notFound") } });
      return;
    }
    if (e.type === "entity.parse.failed") {
      res.status(400).json({ error: { code: "invalid_json", message: say("invalidJson") } });
      return;
    }
    if (e.type === "entity.too.large" || e.code === "LIMIT_FILE_SIZE") {
      res.status(413).json({ error: { code: "too_large", message: say(e.code === "LIMIT_FILE_SIZE" ? "fileTooLarge" : "bodyTooLarge") } });
      return;
    }
    if (typeof e.code === "string" && e.code.startsWith("LIMIT_")) {
      res.status(400).json({ error: { code: "upload_rejected", message: e.message ?? say("uploadRefused"), details: { field: e.field } } });
      return;
    }
    if (e.code && STORAGE_TROUBLE.has(e.code)) {
      // A folder or disk the server cannot write (read-only, full, wrong owner) that no service named.
      logger.error({ method: req.method, path: req.path, err }, "storage cannot be written");
      res.status(503).json({
        error: {
          code: "store_unwritable",
          message: say(e.code === "ENOSPC" || e.code === "EDQUOT" ? "diskFull" : "storeUnwritable"),
        },
      });
      return;
    }
    if (typeof e.status === "number" && e.status >= 400 && e.status < 500) {
      // The library's own message may name server paths: answer with a fixed one.
      res.status(e.status).json({ error: { code: "bad_request", message: say("refused") } });
      return;
    }
    logger.error({ method: req.method, path: req.path, err }, "unhandled error");
    res.status(500).json({ error: { code: "internal", message: say("internal") } });
  };
}
