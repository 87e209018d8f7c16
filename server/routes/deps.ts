import type { Auth } from "../auth";
import type { Db } from "../db/client";
import type { Env } from "../env";
import type { Logger } from "../lib/logger";

/** What route modules receive from createApp. */
export interface Deps {
  db: Db;
  auth: Auth;
  env: Env;
  logger: Logger;
}
