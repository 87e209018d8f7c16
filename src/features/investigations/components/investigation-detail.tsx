import { useState, type ReactNode } from "react";
import { Link } from "react-router";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { ACTION_STATUSES, type Investigation, type Person } from "@shared/api/investigations";
import { AttachmentsCard } from "@/components/attachments-card";
import { MutationError, TextAreaField, todayInput, useAddRow } from "@/components/mutation-form";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { fieldInputClass, TextField } from "@/components/ui/field";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { count, date, dateTime, DASH } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { useInvestigationChange, useUploadAttachments } from "../api/investigations.queries";
import { heatList, PersonOptions } from "./new-investigation-form";
import { ActionStatusMark, HypothesisStatusMark, InvestigationStatusMark, OverdueMark } from "./investigation-marks";
import { DateField } from "@/components/ui/date-field";

export type TagOption = { code: string; name: string; group: string };

const inputClass = "min-h-11 w-full min-w-0 rounded-md border border-ink-300 bg-white px-3 text-sm text-ink-900";
const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";

function TagSelect({
  tags,
  value,
  onChange,
  id,
  emptyLabel,
}: {
  /** Null while the cause list is on its way: said in the field, which waits, rather than offer "none" for a moment. */
  tags: TagOption[] | null;
  value: string;
  onChange: (v: string) => void;
  id: string;
  emptyLabel?: string;
}) {
  const { t } = useTranslation("process");
  if (tags === null)
    return (
      <select id={id} disabled value="" className={inputClass} data-loading="true">
        <option value="">{t("investigations.detail.loadingCauses")}</option>
      </select>
    );
  const groups = [...new Set(tags.map((t) => t.group))];
  return (
    <select id={id} value={value} onChange={(e) => onChange(e.target.value)} className={inputClass}>
      {emptyLabel !== undefined ? <option value="">{emptyLabel}</option> : null}
      {groups.map((g) => (
        <optgroup key={g} label={g}>
          {tags
            .filter((t) => t.group === g)
            .map((t) => (
              <option key={t.code} value={t.code}>
                {t.name}
              </option>
            ))}
        </optgroup>
      ))}
    </select>
  );
}

export function InvestigationSummaryCard({ inv, canManage, people }: { inv: Investigation; canManage: boolean; people: Person[] }) {
  const { t } = useTranslation("process");
  const change = useInvestigationChange(inv.id);
  const closed = inv.status === "closed";
  return (
    <Card>
      <div className="grid gap-4 xl:grid-cols-[2fr_1fr]">
        <div>
          <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">{t("investigations.detail.problemStatement")}</div>
          <p className="mt-1 whitespace-pre-line text-ink-900" data-testid="problem-statement">
            {inv.problemStatement}
          </p>
        </div>
        <dl className="grid grid-cols-2 gap-3 text-sm">
          <div>
            <dt className="text-xs font-semibold uppercase text-ink-600">{t("investigations.table.status")}</dt>
            <dd className="mt-1">
              <InvestigationStatusMark status={inv.status} />
            </dd>
          </div>
          <div>
            <dt className="text-xs font-semibold uppercase text-ink-600">{t("investigations.table.opened")}</dt>
            <dd className="mt-1">{date(inv.openedAt)}</dd>
          </div>
          {/* The whole row: a name in a drop-down is cut off in half of the narrow column. */}
          <div className="col-span-2">
            <dt className="text-xs font-semibold uppercase text-ink-600">{t("investigations.table.owner")}</dt>
            <dd className="mt-1">
              {canManage && !closed ? (
                <select
                  aria-label={t("investigations.table.owner")}
                  value={inv.owner?.id ?? ""}
                  disabled={change.isPending}
                  onChange={(e) => change.mutate({ method: "PATCH", path: "", body: { ownerId: e.target.value } })}
                  className={inputClass}
                >
                  {inv.owner ? null : <option value="">{t("investigations.detail.noOwner")}</option>}
                  {/* The owner as recorded while the people are on their way, or when no longer offered (an account closed): never another name shown in their place. */}
                  {inv.owner && !people.some((p) => p.id === inv.owner!.id) ? <option value={inv.owner.id}>{inv.owner.name}</option> : null}
                  <PersonOptions people={people} />
                </select>
              ) : (
                (inv.owner?.name ?? DASH)
              )}
            </dd>
          </div>
          <div>
            <dt className="text-xs font-semibold uppercase text-ink-600">{t("investigations.detail.actions")}</dt>
            <dd className="mt-1">
              {t("investigations.detail.openOf", { open: count(inv.actions.open), total: count(inv.actions.total) })}
              {inv.actions.overdue ? (
                <div>
                  <OverdueMark label={t("home.overdue", { n: count(inv.actions.overdue) })} />
                </div>
              ) : null}
            </dd>
          </div>
        </dl>
      </div>
      {canManage && !closed ? (
        <div className="mt-3 flex flex-wrap gap-2 border-t border-ink-100 pt-3">
          {inv.status === "open" ? (
            <Button
              variant="secondary"
              disabled={change.isPending}
              onClick={() => change.mutate({ method: "PATCH", path: "", body: { status: "in_progress" } })}
            >
              {t("investigations.detail.markUnderWay")}
            </Button>
          ) : (
            <Button variant="secondary" disabled={change.isPending} onClick={() => change.mutate({ method: "PATCH", path: "", body: { status: "open" } })}>
              {t("investigations.detail.backToOpen")}
            </Button>
          )}
        </div>
      ) : null}
      {inv.status === "closed" ? (
        <div className="mt-4 rounded-md border-2 border-ink-700 bg-ink-50 px-4 py-3" data-testid="closure">
          <div className="text-xs font-semibold uppercase text-ink-600">{t("investigations.detail.closedOn", { date: date(inv.closedAt) })}</div>
          <div className="text-lg font-bold" data-testid="confirmed-cause">
            {inv.confirmedCause?.name ?? DASH}
          </div>
          {inv.closureNote ? <p className="mt-1 whitespace-pre-line text-sm">{inv.closureNote}</p> : null}
        </div>
      ) : null}
      <div className="mt-2">
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function SubjectsCard({ inv, canManage }: { inv: Investigation; canManage: boolean }) {
  const { t } = useTranslation("process");
  const change = useInvestigationChange(inv.id);
  const add = useAddRow(change, { heats: "" }, (v) => {
    const list = heatList(v.heats);
    return list.length ? { path: "/subjects", body: { heatNos: list, defectIds: [] } } : null;
  });
  const s = inv.subjects;
  return (
    <Card
      title={t("investigations.detail.subjectsTitle", {
        heats: t("investigations.heats", { count: s.heats.length, n: count(s.heats.length) }),
        defects: t("investigations.defects", { count: s.defects.length, n: count(s.defects.length) }),
      })}
    >
      <div className="space-y-4" data-testid="subjects">
        {s.heats.length ? (
          <ul className="flex flex-wrap gap-2">
            {s.heats.map((h) => (
              <li key={h.heatNo} className="rounded-md border border-ink-200 px-3 py-1.5 text-sm" data-testid="subject-heat">
                <Link to={`/heats/${encodeURIComponent(h.heatNo)}`} className={link}>
                  {t("investigations.detail.heat", { heat: h.heatNo })}
                </Link>
                <span className="text-ink-600">
                  {" "}
                  · {h.grade} · {date(h.castStart)}
                </span>
              </li>
            ))}
          </ul>
        ) : null}
        {s.defects.length ? (
          <div className="max-h-96 overflow-auto">
            <table className="w-full text-sm">
              <thead>
                <tr className="border-b-2 border-ink-200 text-left text-xs font-semibold text-ink-700">
                  <th className="px-2 py-2">{t("investigations.detail.slab")}</th>
                  <th className="px-2 py-2">{t("causes.worklist.colDefect")}</th>
                  <th className="px-2 py-2">{t("causes.worklist.colSeverity")}</th>
                  <th className="px-2 py-2">{t("causes.worklist.colFound")}</th>
                  <th className="px-2 py-2">{t("causes.defect.causes")}</th>
                </tr>
              </thead>
              <tbody>
                {s.defects.map((d) => (
                  <tr key={d.id} className="border-b border-ink-100" data-testid="subject-defect">
                    <td className="px-2 py-1.5">
                      <Link to={`/slabs/${encodeURIComponent(d.slabId)}`} className={`${link} inline-flex min-h-11 items-center`}>
                        {d.slabId}
                      </Link>
                      <div className="text-xs text-ink-600">{t("investigations.detail.heatSmall", { heat: d.heatNo })}</div>
                    </td>
                    <td className="px-2 py-1.5">
                      <span className="font-semibold">{d.type}</span> {d.typeName}
                    </td>
                    <td className="px-2 py-1.5">
                      <SeverityMark severity={d.severity} />
                    </td>
                    <td className="whitespace-nowrap px-2 py-1.5">{date(d.foundAt)}</td>
                    <td className="px-2 py-1.5">
                      {d.causes.length ? d.causes.join(", ") : <span className="text-ink-600">{t("investigations.detail.noneTagged")}</span>}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
        {canManage && inv.status !== "closed" ? (
          <form className="flex flex-wrap items-end gap-2" aria-label={t("investigations.detail.addHeats")} onSubmit={add.onSubmit}>
            <TextField
              label={t("investigations.detail.addHeats")}
              hint={t("investigations.detail.addHeatsHint")}
              {...add.bind("heats")}
              className="min-w-64 flex-1"
            />
            <Button type="submit" variant="secondary" disabled={change.isPending || !add.values.heats.trim()}>
              {t("ui.add")}
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function ParticipantsCard({ inv, canManage, people }: { inv: Investigation; canManage: boolean; people: Person[] }) {
  const { t } = useTranslation("process");
  const change = useInvestigationChange(inv.id);
  const add = useAddRow(change, { pick: "" }, (v) => (v.pick ? { path: "/participants", body: { userIds: [v.pick] } } : null));
  const inIt = new Set([...inv.participants.map((p) => p.id), inv.owner?.id]);
  const others = people.filter((p) => !inIt.has(p.id));
  return (
    <Card title={t("investigations.detail.participantsTitle", { n: count(inv.participants.length) })}>
      <div className="space-y-3">
        {inv.participants.length ? (
          <ul className="space-y-1 text-sm" data-testid="participants">
            {inv.participants.map((p) => (
              <li key={p.id}>
                <span className="font-semibold">{p.name}</span> <span className="text-ink-600">{p.email}</span>
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-ink-600">{t("investigations.detail.onlyOwner")}</p>
        )}
        {canManage && inv.status !== "closed" && others.length ? (
          <form className="flex flex-wrap items-end gap-2" aria-label={t("investigations.detail.addParticipant")} onSubmit={add.onSubmit}>
            <label className="flex min-w-56 flex-1 flex-col gap-1">
              <span className="text-sm font-semibold text-ink-800">{t("investigations.detail.addParticipant")}</span>
              <select {...add.bind("pick")} className={inputClass}>
                <option value="">{t("investigations.detail.choosePerson")}</option>
                <PersonOptions people={others} />
              </select>
            </label>
            <Button type="submit" variant="secondary" disabled={!add.values.pick || change.isPending}>
              {t("ui.add")}
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function HypothesesCard({ inv, canManage, tags }: { inv: Investigation; canManage: boolean; tags: TagOption[] | null }) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  const change = useInvestigationChange(inv.id);
  const add = useAddRow(change, { statement: "", causeTag: "" }, (v) => ({
    path: "/hypotheses",
    body: { statement: v.statement.trim(), causeTag: v.causeTag || null },
  }));
  const open = canManage && inv.status !== "closed";
  return (
    <Card title={t("investigations.detail.hypothesesTitle", { n: count(inv.hypotheses.length) })}>
      <div className="space-y-3">
        {inv.hypotheses.length ? (
          <ul className="divide-y divide-ink-100" data-testid="hypotheses">
            {inv.hypotheses.map((h) => (
              <li key={h.id} className="flex flex-wrap items-center gap-x-4 gap-y-2 py-2" data-testid="hypothesis">
                <div className="min-w-56 flex-1">
                  <div className="text-sm text-ink-900">{h.statement}</div>
                  <div className="text-xs text-ink-600">
                    {h.causeTagName ? t("investigations.detail.causeTag", { name: h.causeTagName }) : t("investigations.detail.noCauseTag")} ·{" "}
                    {date(h.createdAt)}
                  </div>
                </div>
                <HypothesisStatusMark status={h.status} />
                {open ? (
                  <div className="flex flex-wrap gap-2">
                    {h.status !== "supported" ? (
                      <Button
                        variant="secondary"
                        disabled={change.isPending}
                        onClick={() => change.mutate({ method: "PATCH", path: `/hypotheses/${h.id}`, body: { status: "supported" } })}
                      >
                        {term("hypothesisStatus", "supported")}
                      </Button>
                    ) : null}
                    {h.status !== "rejected" ? (
                      <Button
                        variant="secondary"
                        disabled={change.isPending}
                        onClick={() => change.mutate({ method: "PATCH", path: `/hypotheses/${h.id}`, body: { status: "rejected" } })}
                      >
                        {t("investigations.detail.ruleOut")}
                      </Button>
                    ) : null}
                    {h.status !== "open" ? (
                      <Button
                        variant="ghost"
                        disabled={change.isPending}
                        onClick={() => change.mutate({ method: "PATCH", path: `/hypotheses/${h.id}`, body: { status: "open" } })}
                      >
                        {term("hypothesisStatus", "open")}
                      </Button>
                    ) : null}
                  </div>
                ) : null}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-ink-600">{t("investigations.detail.noHypothesis")}</p>
        )}
        {open ? (
          <form className="grid gap-2 md:grid-cols-[2fr_1fr_auto] md:items-end" aria-label={t("investigations.detail.addHypothesis")} onSubmit={add.onSubmit}>
            <TextField
              label={t("investigations.detail.newHypothesis")}
              {...add.bind("statement")}
              maxLength={1000}
              placeholder={t("investigations.detail.hypothesisPlaceholder")}
            />
            <div className="flex flex-col gap-1">
              <label htmlFor="hyp-tag" className="text-sm font-semibold text-ink-800">
                {t("investigations.detail.causeTagOptional")}
              </label>
              <TagSelect
                id="hyp-tag"
                tags={tags}
                value={add.values.causeTag}
                onChange={(v) => add.set("causeTag", v)}
                emptyLabel={t("investigations.detail.none")}
              />
            </div>
            <Button type="submit" variant="secondary" className="self-end" disabled={change.isPending || add.values.statement.trim().length === 0}>
              {t("ui.add")}
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function ActionsCard({ inv, canManage, people }: { inv: Investigation; canManage: boolean; people: Person[] }) {
  const { t } = useTranslation("process");
  const { term } = useTerms();
  const change = useInvestigationChange(inv.id);
  // The owner stays chosen for the next action.
  const add = useAddRow(
    change,
    { description: "", ownerId: "", dueOn: "" },
    (v) => ({ path: "/actions", body: { description: v.description.trim(), ownerId: v.ownerId, dueOn: v.dueOn } }),
    ["ownerId"],
  );
  const { description, ownerId, dueOn } = add.values;
  const open = canManage && inv.status !== "closed";
  return (
    <Card title={t("investigations.detail.actionsTitle", { n: count(inv.actionList.length) })}>
      <div className="space-y-3">
        {/* What an action may change can hurt someone: the usual cautions, where actions are written and read. */}
        <Notice tone="caution" title={t("investigations.detail.actionsCautionTitle")}>
          {t("investigations.detail.actionsCaution")}
        </Notice>
        {inv.actionList.length ? (
          <ul className="divide-y divide-ink-100" data-testid="actions">
            {inv.actionList.map((a) => (
              <li
                key={a.id}
                className={`flex flex-wrap items-center gap-x-4 gap-y-2 py-2 ${a.overdue ? "border-l-4 border-alarm-700 pl-2" : ""}`}
                data-testid="action"
                data-overdue={a.overdue ? "true" : "false"}
              >
                <div className="min-w-56 flex-1">
                  <div className="text-sm text-ink-900">{a.description}</div>
                  <div className="text-xs text-ink-600">
                    {a.completedAt
                      ? t("investigations.detail.dueCompleted", {
                          owner: a.owner?.name ?? t("investigations.detail.noOwnerSmall"),
                          due: date(a.dueOn),
                          completed: date(a.completedAt),
                        })
                      : t("investigations.detail.due", { owner: a.owner?.name ?? t("investigations.detail.noOwnerSmall"), due: date(a.dueOn) })}
                  </div>
                </div>
                {a.overdue ? <OverdueMark /> : null}
                {open ? (
                  <label className="flex items-center gap-2 text-sm">
                    <span className="sr-only">{t("investigations.detail.statusOf", { action: a.description })}</span>
                    <select
                      value={a.status}
                      disabled={change.isPending}
                      onChange={(e) => change.mutate({ method: "PATCH", path: `/actions/${a.id}`, body: { status: e.target.value } })}
                      className={`${inputClass} w-40`}
                      data-testid="action-status"
                    >
                      {ACTION_STATUSES.map((s) => (
                        <option key={s} value={s}>
                          {term("actionStatus", s)}
                        </option>
                      ))}
                    </select>
                  </label>
                ) : (
                  <ActionStatusMark status={a.status} />
                )}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-ink-600">{t("investigations.detail.noAction")}</p>
        )}
        {open ? (
          <form
            className="grid gap-2 sm:grid-cols-[minmax(0,1fr)_10rem_auto] sm:items-end"
            aria-label={t("investigations.detail.addAction")}
            onSubmit={add.onSubmit}
          >
            {/* The card is half the page wide on a desktop: the action's words get a line of their own, so the person and the date are never cut. */}
            <TextField
              className="sm:col-span-3"
              label={t("investigations.detail.newAction")}
              {...add.bind("description")}
              maxLength={1000}
              placeholder={t("investigations.detail.actionPlaceholder")}
            />
            <div className="flex flex-col gap-1">
              <label htmlFor="action-owner" className="text-sm font-semibold text-ink-800">
                {t("investigations.detail.actionOwner")}
              </label>
              <select id="action-owner" {...add.bind("ownerId")} className={inputClass}>
                <option value="">{t("investigations.detail.choosePerson")}</option>
                <PersonOptions people={people} />
              </select>
            </div>
            <DateField
              label={t("investigations.detail.dueOn")}
              className="flex flex-col gap-1"
              labelClassName="text-sm font-semibold text-ink-800"
              inputClassName={fieldInputClass()}
              value={dueOn}
              onChange={(v) => add.set("dueOn", v)}
              hint={dueOn && dueOn < todayInput() ? t("investigations.detail.datePassed") : undefined}
            />
            <Button type="submit" variant="secondary" className="self-end" disabled={change.isPending || description.trim().length === 0 || !ownerId || !dueOn}>
              {t("ui.add")}
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function InvestigationAttachmentsCard({ inv, canManage }: { inv: Investigation; canManage: boolean }) {
  const { t } = useTranslation("process");
  const upload = useUploadAttachments(inv.id);
  return (
    <AttachmentsCard
      attachments={inv.attachments}
      upload={upload}
      canUpload={canManage && inv.status !== "closed"}
      hint={t("investigations.detail.attachHint", { files: count(5), size: count(20) })}
    />
  );
}

/** `tags` null while the cause list is on its way (the supported hypothesis's cause is offered once it has come). */
export function ClosureCard({ inv, tags }: { inv: Investigation; tags: TagOption[] | null }) {
  const { t } = useTranslation("process");
  const change = useInvestigationChange(inv.id);
  const supported = inv.hypotheses.find((h) => h.status === "supported" && h.causeTag)?.causeTag ?? "";
  // The supported hypothesis's cause is offered until one is chosen here (also when a hypothesis is marked supported on this page).
  const [chosen, setCause] = useState<string | null>(null);
  const cause = chosen ?? supported;
  const [note, setNote] = useState("");
  const [problem, setProblem] = useState<"errorCause" | "errorNote" | null>(null);
  const openActions = inv.actionList.filter((a) => a.status === "open" || a.status === "in_progress").length;
  return (
    <Card title={t("investigations.closure.title")}>
      <form
        className="space-y-3"
        aria-label={t("investigations.closure.title")}
        onSubmit={(e) => {
          e.preventDefault();
          setProblem(null);
          if (!cause) return setProblem("errorCause");
          if (note.trim().length < 5) return setProblem("errorNote");
          change.mutate({ path: "/close", body: { confirmedCause: cause, closureNote: note.trim() } });
        }}
      >
        {openActions ? <Notice tone="caution">{t("investigations.closure.stillOpen", { count: openActions, n: count(openActions) })}</Notice> : null}
        <div className="grid gap-3 md:grid-cols-2">
          <div className="flex flex-col gap-1">
            <label htmlFor="close-cause" className="text-sm font-semibold text-ink-800">
              {t("investigations.closure.confirmedCause")}
            </label>
            <TagSelect id="close-cause" tags={tags} value={cause} onChange={setCause} emptyLabel={t("investigations.closure.chooseCause")} />
          </div>
        </div>
        <TextAreaField
          id="close-note"
          label={t("investigations.closure.note")}
          rows={3}
          value={note}
          onChange={(e) => setNote(e.target.value)}
          maxLength={5000}
          className="rounded-md border border-ink-300 bg-white px-3 py-2 text-sm"
          placeholder={t("investigations.closure.notePlaceholder")}
        />
        {problem ? <Notice tone="error">{t(`investigations.closure.${problem}`)}</Notice> : null}
        <MutationError mutation={change} />
        <Button type="submit" disabled={change.isPending || tags === null}>
          {change.isPending ? t("investigations.closure.closing") : t(openActions ? "investigations.closure.closeCancelling" : "investigations.closure.close")}
        </Button>
      </form>
    </Card>
  );
}

/** The server's record names, by their words' keys under investigations.history.words. */
const HISTORY_WORDS: Record<string, string> = {
  "investigation.open": "opened",
  "investigation.create": "opened",
  "investigation.update": "changed",
  "investigation.close": "closed",
  "investigation.subjects.add": "subjectsAdded",
  "investigation.participants.add": "participantsAdded",
  "investigation.hypothesis.add": "hypothesisAdded",
  "investigation.hypothesis.update": "hypothesisChanged",
  "investigation.action.add": "actionAdded",
  "investigation.action.update": "actionChanged",
  "investigation.attachments.add": "fileAttached",
};
/** The server's record names as words; an unknown one loses its dots rather than show as code. */
const historyWords = (t: TFunction, a: string) => {
  const key = HISTORY_WORDS[a];
  return key ? t(`investigations.history.words.${key}`) : a.replace(/^investigation\./, "").replace(/[._]/g, " ");
};

export function HistoryCard({ inv }: { inv: Investigation }) {
  const { t } = useTranslation("process");
  return (
    <Card title={t("investigations.history.title")}>
      {inv.history.length ? (
        <ol className="space-y-1 text-sm" data-testid="investigation-history">
          {inv.history.map((h, i) => (
            <li key={i} className="flex flex-wrap gap-x-3">
              <span className="whitespace-nowrap tabular-nums text-ink-600">{dateTime(h.at)}</span>
              <span className="font-semibold">{h.by ?? t("investigations.history.system")}</span>
              <span title={h.action}>{historyWords(t, h.action)}</span>
            </li>
          ))}
        </ol>
      ) : (
        <p className="text-sm text-ink-600">{t("investigations.history.empty")}</p>
      )}
    </Card>
  );
}

export function Section({ children }: { children: ReactNode }) {
  return <div className="grid gap-5 xl:grid-cols-2">{children}</div>;
}
