import path from "node:path";
import type { Db } from "../db/client";
import type { Env } from "../env";
import type { Logger } from "../lib/logger";
import { startFakeSmtp } from "./fake-smtp";
import { createMailer } from "./mailer";
import { say } from "../lib/words";

/**
 * The mail path of a running app: SMTP_URL when set; otherwise the local fake SMTP server, started
 * here, on FAKE_SMTP_PORT. `startFake: false` queues only (until setSmtpUrl points it somewhere).
 */
export async function setupMail(db: Db, env: Env, logger: Logger, opts: { startFake?: boolean } = {}) {
  const dir = path.join(path.resolve(env.UPLOAD_DIR), "mail");
  if (env.SMTP_URL) {
    const host = new URL(env.SMTP_URL).host;
    return { mailer: createMailer({ db, logger, smtpUrl: env.SMTP_URL, from: env.MAIL_FROM, dir, describe: () => say("mail.smtp", { host }) }), fake: null };
  }
  if (opts.startFake === false) {
    return {
      mailer: createMailer({ db, logger, smtpUrl: "smtp://127.0.0.1:9", from: env.MAIL_FROM, dir, describe: () => say("mail.none") }),
      fake: null,
    };
  }
  let fake;
  try {
    fake = await startFakeSmtp({ db, logger, port: env.FAKE_SMTP_PORT });
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code !== "EADDRINUSE") throw err;
    // Another program holds the port (a second copy of the app, say): take any free one instead.
    fake = await startFakeSmtp({ db, logger, port: 0 });
    logger.info({ wanted: env.FAKE_SMTP_PORT, port: fake.port }, "fake SMTP port was taken; using another");
  }
  const mailer = createMailer({
    db,
    logger,
    smtpUrl: `smtp://127.0.0.1:${fake.port}`,
    from: env.MAIL_FROM,
    dir,
    describe: () => say("mail.fake", { port: fake.port }),
  });
  return { mailer, fake };
}
