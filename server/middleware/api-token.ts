import type { RequestHandler } from "express";
import type { Db } from "../db/client";
import { authenticateToken } from "../services/tokens.service";

/**
 * Reads `Authorization: Bearer <token>` into req.apiToken, with the kinds it may send (scopes): the
 * role gate lets a token reach the feed only, and the feed route checks the kind (assertTokenAllows).
 */
export function apiTokenContext(db: Db): RequestHandler {
  return (req, _res, next) => {
    const header = req.headers.authorization;
    if (header?.startsWith("Bearer ")) {
      const found = authenticateToken(db, header.slice(7).trim());
      if (found) req.apiToken = found;
    }
    next();
  };
}
