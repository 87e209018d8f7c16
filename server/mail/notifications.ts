/**
 * Who gets which message. Each function composes the message and queues it; none waits on the mail
 * server, and none throws into the user's action (a failure to queue is logged).
 */
import type { Defect } from "@shared/api/defects";
import { languageOf, type Language } from "@shared/i18n/languages";
import type { TFunction } from "i18next";
import type { Db } from "../db/client";
import { translator } from "../lib/i18n";
import type { Logger } from "../lib/logger";
import type { Mailer, MailMessage } from "./mailer";

type Row = Record<string, any>;

/** A message's words, made once per language of its recipients. */
type Words = Omit<MailMessage, "to">;

export function createNotifications(opts: { db: Db; mailer: Mailer; baseUrl: string; logger: Logger }) {
  const { db, mailer, baseUrl, logger } = opts;
  const sqlite = db.$client;
  const link = (p: string) => new URL(p, baseUrl).toString();
  const footer = (t: TFunction) => `\n\n—\nStrandsight · ${baseUrl}\n${t("server:mail.footer")}`;
  /** Addresses invited just now: their reset link goes out as an invitation. */
  const invitations = new Set<string>();

  const send = (msg: MailMessage, t: TFunction) => {
    try {
      return mailer.enqueue({ ...msg, text: msg.text + footer(t) });
    } catch (err) {
      logger.error({ err, kind: msg.kind }, "could not queue a message");
      return null;
    }
  };

  /** The language each address's person chose (English where none, or no such person). */
  const languageOfAddress = (email: string): Language =>
    languageOf(sqlite.prepare("select language from user where lower(email) = lower(?)").pluck().get(email) as string | null | undefined) ?? "en";

  /**
   * One message per language of the recipients (English first), each in its readers' words.
   * Returns the first message's outbox id, or null when nothing was queued.
   */
  const sendEach = (to: string[], words: (t: TFunction, language: Language) => Words) => {
    const groups = new Map<Language, string[]>([["en", []]]);
    for (const address of to) {
      const language = languageOfAddress(address);
      groups.set(language, [...(groups.get(language) ?? []), address]);
    }
    let first: number | null = null;
    for (const [language, addresses] of groups) {
      if (addresses.length === 0) continue;
      const t = translator(language);
      const id = send({ ...words(t, language), to: addresses }, t);
      first ??= id;
    }
    return first;
  };

  /** A number with one or two decimals in the reader's way of writing it (German: decimal comma). */
  const fixed = (language: Language, v: number, digits: number) => (language === "de" ? v.toFixed(digits).replace(".", ",") : v.toFixed(digits));

  const activeWithRole = (role: string) =>
    (sqlite.prepare("select email, role from user where coalesce(banned, 0) = 0").all() as Row[])
      .filter((u) =>
        String(u.role ?? "")
          .split(",")
          .map((r) => r.trim())
          .includes(role),
      )
      .map((u) => u.email as string);

  const emailOf = (userId: string | null | undefined) =>
    userId ? ((sqlite.prepare("select email from user where id = ? and coalesce(banned, 0) = 0").pluck().get(userId) as string | undefined) ?? null) : null;

  return {
    criticalDefect(d: Defect) {
      return sendEach(activeWithRole("quality"), (t) => {
        const term = (list: string, key: unknown) => t(`common:terms.${list}.${String(key)}`, { defaultValue: String(key) });
        return {
          kind: "critical_defect",
          subject: t("server:mail.criticalDefect.subject", { slab: d.slabId, type: d.typeCode, typeName: d.typeName }),
          text: [
            t("server:mail.criticalDefect.logged", { severity: d.severity, severityLabel: term("severities", d.severity) }),
            "",
            t("server:mail.criticalDefect.slab", { slab: d.slabId, heat: d.heatNo, grade: d.gradeCode, strand: d.strandNo }),
            t("server:mail.criticalDefect.defect", { type: d.typeCode, typeName: d.typeName, face: term("faces", d.face), along: d.positionAlongMm ?? "–" }),
            t("server:mail.criticalDefect.disposition", { disposition: term("dispositions", d.disposition) }),
            t("server:mail.criticalDefect.loggedBy", { by: d.createdByName ?? t("server:mail.criticalDefect.unknownPerson"), at: d.foundAt }),
            d.note ? t("server:mail.criticalDefect.note", { note: d.note }) : "",
            "",
            t("server:mail.criticalDefect.openSlab", { url: link(`/slabs/${encodeURIComponent(d.slabId)}`) }),
            t("server:mail.criticalDefect.reviewQueue", { url: link("/quality/review") }),
          ]
            .filter((l, i, a) => l !== "" || a[i - 1] !== "")
            .join("\n"),
        };
      });
    },

    actionAssigned(inv: Row, action: Row) {
      const to = emailOf(action.owner_id);
      if (!to) return null;
      return sendEach([to], (t) => ({
        kind: "action_assigned",
        subject: t("server:mail.actionAssigned.subject", { ref: inv.ref, due: action.due_on }),
        text: t("server:mail.actionAssigned.text", {
          ref: inv.ref,
          title: inv.title,
          action: action.description,
          due: action.due_on,
          url: link(`/investigations/${inv.id}`),
        }),
      }));
    },

    actionOverdue(inv: Row, action: Row) {
      const to = emailOf(action.owner_id);
      if (!to) return null;
      return sendEach([to], (t) => ({
        kind: "action_overdue",
        subject: t("server:mail.actionOverdue.subject", { ref: inv.ref, due: action.due_on }),
        text: t("server:mail.actionOverdue.text", {
          ref: inv.ref,
          title: inv.title,
          action: action.description,
          due: action.due_on,
          url: link(`/investigations/${inv.id}`),
        }),
      }));
    },

    investigationClosed(inv: Row, cause: { code: string; name: string }, recipients: string[]) {
      return sendEach(recipients, (t) => ({
        kind: "investigation_closed",
        subject: t("server:mail.investigationClosed.subject", { ref: inv.ref, cause: cause.name }),
        text: t("server:mail.investigationClosed.text", {
          ref: inv.ref,
          title: inv.title,
          cause: cause.name,
          code: cause.code,
          closure: inv.closure_note,
          url: link(`/investigations/${inv.id}`),
        }),
      }));
    },

    /**
     * A risk model has drifted (server/services/risk/drift.service.ts): the months newly found
     * drifted, to every active quality engineer. Returns the outbox id, or null when nothing was queued.
     */
    riskDrift(
      alert: {
        modelId: number;
        target: string;
        version: number;
        months: {
          month: string;
          slabs: number;
          affected: number;
          predicted: number;
          observed: number;
          citl: number | null;
          auc: number | null;
          aucCiLower: number | null;
          aucCiUpper: number | null;
          reason: string;
          /** The reason in the other languages (English in `reason`). */
          reasons?: Partial<Record<Language, string>>;
        }[];
      },
      validationAucCiLower: number | null,
    ) {
      return sendEach(activeWithRole("quality"), (t, language) => {
        const pc = (v: number) => `${fixed(language, v * 100, 1)} %`;
        const f = (v: number | null) => (v === null ? t("server:mail.riskDrift.notDefined") : fixed(language, v, 2));
        const lines = alert.months.map((m) =>
          [
            t("server:mail.riskDrift.month", { month: m.month, slabs: m.slabs, affected: m.affected }),
            t("server:mail.riskDrift.predicted", { predicted: pc(m.predicted), observed: pc(m.observed) }),
            `  ${t("server:mail.riskDrift.auc", { auc: f(m.auc) })}${
              m.aucCiLower !== null && m.aucCiUpper !== null ? t("server:mail.riskDrift.interval", { lower: f(m.aucCiLower), upper: f(m.aucCiUpper) }) : ""
            }${validationAucCiLower !== null ? t("server:mail.riskDrift.atValidation", { lower: fixed(language, validationAucCiLower, 2) }) : ""}.`,
            t("server:mail.riskDrift.why", { reason: m.reasons?.[language] ?? m.reason }),
          ].join("\n"),
        );
        return {
          kind: "risk_drift",
          subject: t("server:mail.riskDrift.subject", { target: alert.target, version: alert.version, months: alert.months.map((m) => m.month).join(", ") }),
          text: [
            t("server:mail.riskDrift.intro", { target: alert.target, version: alert.version }),
            "",
            ...lines,
            "",
            t("server:mail.riskDrift.whatToDo"),
            t("server:mail.riskDrift.train"),
            t("server:mail.riskDrift.meanwhile"),
            t("server:mail.riskDrift.neverClears"),
            "",
            t("server:mail.riskDrift.models", { url: link("/risk-models") }),
          ].join("\n"),
        };
      });
    },

    /** Marks the next reset link for this address as an invitation. */
    inviting(email: string) {
      invitations.add(email.toLowerCase());
    },

    /** better-auth's sendResetPassword: a reset link, or the invitation of a new account. */
    resetLink(u: { email: string; name: string }, url: string) {
      const email = u.email.toLowerCase();
      if (invitations.delete(email)) {
        return sendEach([u.email], (t) => ({
          kind: "invitation",
          subject: t("server:mail.invitation.subject"),
          text: t("server:mail.invitation.text", { name: u.name, email: u.email, url, signIn: link("/sign-in") }),
        }));
      }
      return sendEach([u.email], (t) => ({
        kind: "password_reset",
        subject: t("server:mail.passwordReset.subject"),
        text: t("server:mail.passwordReset.text", { name: u.name, url }),
      }));
    },
  };
}

export type Notifications = ReturnType<typeof createNotifications>;
