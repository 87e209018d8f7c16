/**
 * Who gets which message. Each function composes the message and queues it; none waits on the mail
 * server, and none throws into the user's action (a failure to queue is logged).
 */
import type { Defect } from "@shared/api/defects";
import { DISPOSITION_LABELS, FACE_LABELS, SEVERITY_LABELS, type Disposition, type Face, type Severity } from "@shared/domain";
import type { Db } from "../db/client";
import type { Logger } from "../lib/logger";
import type { Mailer, MailMessage } from "./mailer";

type Row = Record<string, any>;

export function createNotifications(opts: { db: Db; mailer: Mailer; baseUrl: string; logger: Logger }) {
  const { db, mailer, baseUrl, logger } = opts;
  const sqlite = db.$client;
  const link = (p: string) => new URL(p, baseUrl).toString();
  const footer = `\n\n—\nStrandsight · ${baseUrl}\nThis message was sent automatically; replies are not read.`;
  /** Addresses invited just now: their reset link goes out as an invitation. */
  const invitations = new Set<string>();

  const send = (msg: MailMessage) => {
    try {
      return mailer.enqueue({ ...msg, text: msg.text + footer });
    } catch (err) {
      logger.error({ err, kind: msg.kind }, "could not queue a message");
      return null;
    }
  };

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
      const to = activeWithRole("quality");
      return send({
        kind: "critical_defect",
        to,
        subject: `Critical defect on slab ${d.slabId}: ${d.typeCode} ${d.typeName}`,
        text: [
          `A defect of severity ${d.severity} (${SEVERITY_LABELS[d.severity as Severity] ?? d.severity}) was logged.`,
          "",
          `Slab: ${d.slabId} (heat ${d.heatNo}, grade ${d.gradeCode}, strand ${d.strandNo})`,
          `Defect: ${d.typeCode} ${d.typeName}, ${FACE_LABELS[d.face as Face] ?? d.face}, ${d.positionAlongMm ?? "–"} mm from the head end`,
          `Disposition proposed: ${DISPOSITION_LABELS[d.disposition as Disposition] ?? d.disposition}`,
          `Logged by: ${d.createdByName ?? "unknown"} at ${d.foundAt}`,
          d.note ? `Note: ${d.note}` : "",
          "",
          `Open the slab: ${link(`/slabs/${encodeURIComponent(d.slabId)}`)}`,
          `Review queue: ${link("/quality/review")}`,
        ]
          .filter((l, i, a) => l !== "" || a[i - 1] !== "")
          .join("\n"),
      });
    },

    actionAssigned(inv: Row, action: Row) {
      const to = emailOf(action.owner_id);
      if (!to) return null;
      return send({
        kind: "action_assigned",
        to: [to],
        subject: `Action for you in ${inv.ref}: due ${action.due_on}`,
        text: `You own an action in the investigation ${inv.ref} “${inv.title}”.\n\nAction: ${action.description}\nDue: ${action.due_on}\n\nOpen the investigation: ${link(`/investigations/${inv.id}`)}`,
      });
    },

    actionOverdue(inv: Row, action: Row) {
      const to = emailOf(action.owner_id);
      if (!to) return null;
      return send({
        kind: "action_overdue",
        to: [to],
        subject: `Overdue action in ${inv.ref} (was due ${action.due_on})`,
        text: `Your action in the investigation ${inv.ref} “${inv.title}” was due on ${action.due_on} and is not done.\n\nAction: ${action.description}\n\nUpdate it or agree a new date: ${link(`/investigations/${inv.id}`)}`,
      });
    },

    investigationClosed(inv: Row, cause: { code: string; name: string }, recipients: string[]) {
      return send({
        kind: "investigation_closed",
        to: recipients,
        subject: `Investigation ${inv.ref} closed: ${cause.name}`,
        text: `The investigation ${inv.ref} “${inv.title}” is closed.\n\nConfirmed cause: ${cause.name} (${cause.code})\n\nClosure: ${inv.closure_note}\n\nThe record: ${link(`/investigations/${inv.id}`)}`,
      });
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
        }[];
      },
      validationAucCiLower: number | null,
    ) {
      const pc = (v: number) => `${(v * 100).toFixed(1)} %`;
      const f = (v: number | null) => (v === null ? "not defined" : v.toFixed(2));
      const lines = alert.months.map((m) =>
        [
          `${m.month}: ${m.slabs} judged slabs, ${m.affected} with the defect.`,
          `  Predicted ${pc(m.predicted)} with the defect, observed ${pc(m.observed)}.`,
          `  AUC ${f(m.auc)}${m.aucCiLower !== null && m.aucCiUpper !== null ? ` (95 % interval ${f(m.aucCiLower)} to ${f(m.aucCiUpper)})` : ""}${validationAucCiLower !== null ? `; at validation its interval began at ${validationAucCiLower.toFixed(2)}` : ""}.`,
          `  Why: ${m.reason}.`,
        ].join("\n"),
      );
      return send({
        kind: "risk_drift",
        to: activeWithRole("quality"),
        subject: `Risk model drifting: ${alert.target}, version ${alert.version} (${alert.months.map((m) => m.month).join(", ")})`,
        text: [
          `The risk model for ${alert.target} (version ${alert.version}) no longer matches what the yard finds on the slabs cast since it was trained.`,
          "",
          ...lines,
          "",
          "What to do:",
          "- Train a new version on recent slabs (Risk models, Train a new version), read its validation, and switch it on only if it beats the baseline.",
          "- Until then read this model's risks with care: its order of the slabs may no longer hold.",
          "- A risk orders the inspection work; it never clears a slab. Every slab is inspected as the plant's procedure requires.",
          "",
          `The model and its months: ${link("/risk-models")}`,
        ].join("\n"),
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
        return send({
          kind: "invitation",
          to: [u.email],
          subject: "Your Strandsight account",
          text: `Hello ${u.name},\n\nan administrator has created a Strandsight account for you (${u.email}).\n\nChoose your password here (the link works for one hour): ${url}\n\nAfter that, sign in at ${link("/sign-in")}. If the link has expired, use “Forgot your password?” on the sign-in page.`,
        });
      }
      return send({
        kind: "password_reset",
        to: [u.email],
        subject: "Reset your Strandsight password",
        text: `Hello ${u.name},\n\nsomeone (we hope you) asked to reset the password of your Strandsight account.\n\nChoose a new password here (the link works for one hour): ${url}\n\nIf you did not ask for this, ignore this message: your password stays as it is.`,
      });
    },
  };
}

export type Notifications = ReturnType<typeof createNotifications>;
