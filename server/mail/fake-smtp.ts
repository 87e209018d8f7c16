/**
 * The local stand-in for the plant's mail server: a real SMTP server (the smtp-server package) that
 * accepts every message and stores it, parsed by mailparser, in mail_received. The app's mail goes
 * to it over a real SMTP connection unless SMTP_URL names another server.
 */
import { SMTPServer } from "smtp-server";
import { loadMailParser } from "../lib/lazy-packages";
import type { AddressInfo } from "node:net";
import type { Db } from "../db/client";
import type { Logger } from "../lib/logger";

const MAX_MESSAGE_BYTES = 40 * 1024 * 1024;

export async function startFakeSmtp(opts: { db: Db; logger: Logger; host?: string; port: number }) {
  const sqlite = opts.db.$client;
  const insert = sqlite.prepare(
    "insert into mail_received (received_at, message_id, envelope_from, envelope_to, subject, text_body, attachments, raw) values (?, ?, ?, ?, ?, ?, ?, ?)",
  );
  const server = new SMTPServer({
    secure: false,
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    size: MAX_MESSAGE_BYTES,
    logger: false,
    banner: "Strandsight local mail catcher",
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        const raw = Buffer.concat(chunks);
        loadMailParser()
          .then(({ simpleParser }) => simpleParser(raw))
          .then((mail) => {
            insert.run(
              Date.now(),
              mail.messageId ?? null,
              session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
              session.envelope.rcptTo.map((r) => r.address).join(", "),
              mail.subject ?? null,
              mail.text ?? null,
              JSON.stringify(mail.attachments.map((a) => ({ filename: a.filename ?? null, contentType: a.contentType, size: a.size }))),
              // Keep the wire text of ordinary messages; large ones (workbooks attached) by their parts only.
              raw.length <= 1024 * 1024 ? raw.toString("utf8") : null,
            );
            callback();
          })
          .catch((err: Error) => {
            opts.logger.error({ err }, "fake SMTP server could not store a message");
            callback(err);
          });
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(opts.port, opts.host ?? "127.0.0.1", () => resolve());
  });
  server.on("error", (err) => opts.logger.error({ err }, "fake SMTP server error"));
  const port = (server.server.address() as AddressInfo).port;
  return {
    port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
