import type { Auth } from "../auth";
import type { Db } from "../db/client";
import type { Env } from "../env";
import type { Logger } from "../lib/logger";
import type { DefectEvents } from "../services/defects.service";
import type { Mailer } from "../mail/mailer";
import type { Notifications } from "../mail/notifications";
import type { ImportPool } from "../import/import-pool";

/** What route modules receive from createApp. */
export interface Deps {
  db: Db;
  auth: Auth;
  env: Env;
  logger: Logger;
  /** Things other parts react to (mail on a critical defect…). */
  events: DefectEvents;
  mailer: Mailer;
  notify: Notifications;
  /** The import threads (server/import/import-pool.ts). */
  imports: ImportPool;
}
