import { useState, type ReactNode } from "react";
import { Link } from "react-router";
import { ACTION_STATUSES, ACTION_STATUS_LABELS, type Investigation, type Person } from "@shared/api/investigations";
import { AttachmentsCard } from "@/components/attachments-card";
import { MutationError, TextAreaField, todayInput, useAddRow } from "@/components/mutation-form";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { SeverityMark } from "@/components/ui/marks";
import { Notice } from "@/components/ui/notice";
import { date, dateTime, DASH, plural } from "@/lib/format";
import { useInvestigationChange, useUploadAttachments } from "../api/investigations.queries";
import { heatList, PersonOptions } from "./new-investigation-form";
import { ActionStatusMark, HypothesisStatusMark, InvestigationStatusMark, OverdueMark } from "./investigation-marks";

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
  tags: TagOption[];
  value: string;
  onChange: (v: string) => void;
  id: string;
  emptyLabel?: string;
}) {
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
  const change = useInvestigationChange(inv.id);
  const closed = inv.status === "closed";
  return (
    <Card>
      <div className="grid gap-4 xl:grid-cols-[2fr_1fr]">
        <div>
          <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">Problem statement</div>
          <p className="mt-1 whitespace-pre-line text-ink-900" data-testid="problem-statement">
            {inv.problemStatement}
          </p>
        </div>
        <dl className="grid grid-cols-2 gap-3 text-sm">
          <div>
            <dt className="text-xs font-semibold uppercase text-ink-600">Status</dt>
            <dd className="mt-1">
              <InvestigationStatusMark status={inv.status} />
            </dd>
          </div>
          <div>
            <dt className="text-xs font-semibold uppercase text-ink-600">Opened</dt>
            <dd className="mt-1">{date(inv.openedAt)}</dd>
          </div>
          {/* The whole row: a name in a drop-down is cut off in half of the narrow column. */}
          <div className="col-span-2">
            <dt className="text-xs font-semibold uppercase text-ink-600">Owner</dt>
            <dd className="mt-1">
              {canManage && !closed ? (
                <select
                  aria-label="Owner"
                  value={inv.owner?.id ?? ""}
                  disabled={change.isPending}
                  onChange={(e) => change.mutate({ method: "PATCH", path: "", body: { ownerId: e.target.value } })}
                  className={inputClass}
                >
                  {inv.owner ? null : <option value="">No owner</option>}
                  <PersonOptions people={people} />
                </select>
              ) : (
                (inv.owner?.name ?? DASH)
              )}
            </dd>
          </div>
          <div>
            <dt className="text-xs font-semibold uppercase text-ink-600">Actions</dt>
            <dd className="mt-1">
              {inv.actions.open} open of {inv.actions.total}
              {inv.actions.overdue ? (
                <div>
                  <OverdueMark label={`${inv.actions.overdue} overdue`} />
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
              Mark as under way
            </Button>
          ) : (
            <Button variant="secondary" disabled={change.isPending} onClick={() => change.mutate({ method: "PATCH", path: "", body: { status: "open" } })}>
              Back to open
            </Button>
          )}
        </div>
      ) : null}
      {inv.status === "closed" ? (
        <div className="mt-4 rounded-md border-2 border-ink-700 bg-ink-50 px-4 py-3" data-testid="closure">
          <div className="text-xs font-semibold uppercase text-ink-600">Closed {date(inv.closedAt)} — confirmed cause</div>
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
  const change = useInvestigationChange(inv.id);
  const add = useAddRow(change, { heats: "" }, (v) => {
    const list = heatList(v.heats);
    return list.length ? { path: "/subjects", body: { heatNos: list, defectIds: [] } } : null;
  });
  const s = inv.subjects;
  return (
    <Card title={`Subjects (${plural(s.heats.length, "heat")}, ${plural(s.defects.length, "defect")})`}>
      <div className="space-y-4" data-testid="subjects">
        {s.heats.length ? (
          <ul className="flex flex-wrap gap-2">
            {s.heats.map((h) => (
              <li key={h.heatNo} className="rounded-md border border-ink-200 px-3 py-1.5 text-sm" data-testid="subject-heat">
                <Link to={`/heats/${encodeURIComponent(h.heatNo)}`} className={link}>
                  Heat {h.heatNo}
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
                  <th className="px-2 py-2">Slab</th>
                  <th className="px-2 py-2">Defect</th>
                  <th className="px-2 py-2">Severity</th>
                  <th className="px-2 py-2">Found</th>
                  <th className="px-2 py-2">Causes</th>
                </tr>
              </thead>
              <tbody>
                {s.defects.map((d) => (
                  <tr key={d.id} className="border-b border-ink-100" data-testid="subject-defect">
                    <td className="px-2 py-1.5">
                      <Link to={`/slabs/${encodeURIComponent(d.slabId)}`} className={`${link} inline-flex min-h-11 items-center`}>
                        {d.slabId}
                      </Link>
                      <div className="text-xs text-ink-600">heat {d.heatNo}</div>
                    </td>
                    <td className="px-2 py-1.5">
                      <span className="font-semibold">{d.type}</span> {d.typeName}
                    </td>
                    <td className="px-2 py-1.5">
                      <SeverityMark severity={d.severity} />
                    </td>
                    <td className="whitespace-nowrap px-2 py-1.5">{date(d.foundAt)}</td>
                    <td className="px-2 py-1.5">{d.causes.length ? d.causes.join(", ") : <span className="text-ink-600">none tagged</span>}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
        {canManage && inv.status !== "closed" ? (
          <form className="flex flex-wrap items-end gap-2" aria-label="Add heats" onSubmit={add.onSubmit}>
            <TextField label="Add heats" hint="Heat numbers, separated by commas or spaces" {...add.bind("heats")} className="min-w-64 flex-1" />
            <Button type="submit" variant="secondary" disabled={change.isPending || !add.values.heats.trim()}>
              Add
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function ParticipantsCard({ inv, canManage, people }: { inv: Investigation; canManage: boolean; people: Person[] }) {
  const change = useInvestigationChange(inv.id);
  const add = useAddRow(change, { pick: "" }, (v) => (v.pick ? { path: "/participants", body: { userIds: [v.pick] } } : null));
  const inIt = new Set([...inv.participants.map((p) => p.id), inv.owner?.id]);
  const others = people.filter((p) => !inIt.has(p.id));
  return (
    <Card title={`Participants (${inv.participants.length})`}>
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
          <p className="text-sm text-ink-600">Only the owner so far.</p>
        )}
        {canManage && inv.status !== "closed" && others.length ? (
          <form className="flex flex-wrap items-end gap-2" aria-label="Add a participant" onSubmit={add.onSubmit}>
            <label className="flex min-w-56 flex-1 flex-col gap-1">
              <span className="text-sm font-semibold text-ink-800">Add a participant</span>
              <select {...add.bind("pick")} className={inputClass}>
                <option value="">Choose a person</option>
                <PersonOptions people={others} />
              </select>
            </label>
            <Button type="submit" variant="secondary" disabled={!add.values.pick || change.isPending}>
              Add
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function HypothesesCard({ inv, canManage, tags }: { inv: Investigation; canManage: boolean; tags: TagOption[] }) {
  const change = useInvestigationChange(inv.id);
  const add = useAddRow(change, { statement: "", causeTag: "" }, (v) => ({
    path: "/hypotheses",
    body: { statement: v.statement.trim(), causeTag: v.causeTag || null },
  }));
  const open = canManage && inv.status !== "closed";
  return (
    <Card title={`Hypotheses (${inv.hypotheses.length})`}>
      <div className="space-y-3">
        {inv.hypotheses.length ? (
          <ul className="divide-y divide-ink-100" data-testid="hypotheses">
            {inv.hypotheses.map((h) => (
              <li key={h.id} className="flex flex-wrap items-center gap-x-4 gap-y-2 py-2" data-testid="hypothesis">
                <div className="min-w-56 flex-1">
                  <div className="text-sm text-ink-900">{h.statement}</div>
                  <div className="text-xs text-ink-600">
                    {h.causeTagName ? `cause tag: ${h.causeTagName}` : "no cause tag"} · {date(h.createdAt)}
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
                        Supported
                      </Button>
                    ) : null}
                    {h.status !== "rejected" ? (
                      <Button
                        variant="secondary"
                        disabled={change.isPending}
                        onClick={() => change.mutate({ method: "PATCH", path: `/hypotheses/${h.id}`, body: { status: "rejected" } })}
                      >
                        Rule out
                      </Button>
                    ) : null}
                    {h.status !== "open" ? (
                      <Button
                        variant="ghost"
                        disabled={change.isPending}
                        onClick={() => change.mutate({ method: "PATCH", path: `/hypotheses/${h.id}`, body: { status: "open" } })}
                      >
                        Not yet tested
                      </Button>
                    ) : null}
                  </div>
                ) : null}
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-ink-600">No hypothesis yet.</p>
        )}
        {open ? (
          <form className="grid gap-2 md:grid-cols-[2fr_1fr_auto] md:items-end" aria-label="Add a hypothesis" onSubmit={add.onSubmit}>
            <TextField label="New hypothesis" {...add.bind("statement")} maxLength={1000} placeholder="What could explain the defects" />
            <div className="flex flex-col gap-1">
              <label htmlFor="hyp-tag" className="text-sm font-semibold text-ink-800">
                Cause tag (optional)
              </label>
              <TagSelect id="hyp-tag" tags={tags} value={add.values.causeTag} onChange={(v) => add.set("causeTag", v)} emptyLabel="None" />
            </div>
            <Button type="submit" variant="secondary" className="self-end" disabled={change.isPending || add.values.statement.trim().length === 0}>
              Add
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function ActionsCard({ inv, canManage, people }: { inv: Investigation; canManage: boolean; people: Person[] }) {
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
    <Card title={`Actions (${inv.actionList.length})`}>
      <div className="space-y-3">
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
                    {a.owner?.name ?? "no owner"} · due {date(a.dueOn)}
                    {a.completedAt ? ` · completed ${date(a.completedAt)}` : ""}
                  </div>
                </div>
                {a.overdue ? <OverdueMark /> : null}
                {open ? (
                  <label className="flex items-center gap-2 text-sm">
                    <span className="sr-only">Status of “{a.description}”</span>
                    <select
                      value={a.status}
                      disabled={change.isPending}
                      onChange={(e) => change.mutate({ method: "PATCH", path: `/actions/${a.id}`, body: { status: e.target.value } })}
                      className={`${inputClass} w-40`}
                      data-testid="action-status"
                    >
                      {ACTION_STATUSES.map((s) => (
                        <option key={s} value={s}>
                          {ACTION_STATUS_LABELS[s]}
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
          <p className="text-sm text-ink-600">No action yet.</p>
        )}
        {open ? (
          <form className="grid gap-2 md:grid-cols-2 xl:grid-cols-[2fr_1fr_1fr_auto] xl:items-end" aria-label="Add an action" onSubmit={add.onSubmit}>
            <TextField label="New action" {...add.bind("description")} maxLength={1000} placeholder="What is to be done" />
            <div className="flex flex-col gap-1">
              <label htmlFor="action-owner" className="text-sm font-semibold text-ink-800">
                Action owner
              </label>
              <select id="action-owner" {...add.bind("ownerId")} className={inputClass}>
                <option value="">Choose a person</option>
                <PersonOptions people={people} />
              </select>
            </div>
            <TextField
              label="Due on"
              type="date"
              {...add.bind("dueOn")}
              hint={dueOn && dueOn < todayInput() ? "This date has passed: the action shows as overdue." : undefined}
            />
            <Button type="submit" variant="secondary" className="self-end" disabled={change.isPending || description.trim().length === 0 || !ownerId || !dueOn}>
              Add
            </Button>
          </form>
        ) : null}
        <MutationError mutation={change} />
      </div>
    </Card>
  );
}

export function InvestigationAttachmentsCard({ inv, canManage }: { inv: Investigation; canManage: boolean }) {
  const upload = useUploadAttachments(inv.id);
  return (
    <AttachmentsCard attachments={inv.attachments} upload={upload} canUpload={canManage && inv.status !== "closed"} hint="Attach files (up to 5, 20 MB each)" />
  );
}

export function ClosureCard({ inv, tags }: { inv: Investigation; tags: TagOption[] }) {
  const change = useInvestigationChange(inv.id);
  const supported = inv.hypotheses.find((h) => h.status === "supported" && h.causeTag)?.causeTag ?? "";
  const [cause, setCause] = useState(supported);
  const [note, setNote] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const openActions = inv.actionList.filter((a) => a.status === "open" || a.status === "in_progress").length;
  return (
    <Card title="Close the investigation">
      <form
        className="space-y-3"
        aria-label="Close the investigation"
        onSubmit={(e) => {
          e.preventDefault();
          setProblem(null);
          if (!cause) return setProblem("Choose the confirmed cause.");
          if (note.trim().length < 5) return setProblem("Say in the closure note what was found and done.");
          change.mutate({ path: "/close", body: { confirmedCause: cause, closureNote: note.trim() } });
        }}
      >
        {openActions ? <Notice tone="caution">{plural(openActions, "action is", "actions are")} still open.</Notice> : null}
        <div className="grid gap-3 md:grid-cols-2">
          <div className="flex flex-col gap-1">
            <label htmlFor="close-cause" className="text-sm font-semibold text-ink-800">
              Confirmed cause
            </label>
            <TagSelect id="close-cause" tags={tags} value={cause} onChange={setCause} emptyLabel="Choose the confirmed cause" />
          </div>
        </div>
        <TextAreaField
          id="close-note"
          label="Closure note"
          rows={3}
          value={note}
          onChange={(e) => setNote(e.target.value)}
          maxLength={5000}
          className="rounded-md border border-ink-300 bg-white px-3 py-2 text-sm"
          placeholder="What was found, what was changed, through which procedure"
        />
        {problem ? <Notice tone="error">{problem}</Notice> : null}
        <MutationError mutation={change} />
        <Button type="submit" disabled={change.isPending}>
          {change.isPending ? "Closing…" : "Close with this cause"}
        </Button>
      </form>
    </Card>
  );
}

const HISTORY_WORDS: Record<string, string> = {
  "investigation.open": "opened the investigation",
  "investigation.create": "opened the investigation",
  "investigation.update": "changed the investigation",
  "investigation.close": "closed the investigation",
  "investigation.subjects.add": "added subjects",
  "investigation.participants.add": "added participants",
  "investigation.hypothesis.add": "added a hypothesis",
  "investigation.hypothesis.update": "changed a hypothesis",
  "investigation.action.add": "added an action",
  "investigation.action.update": "changed an action",
  "investigation.attachment.add": "attached a file",
};
/** The server's record names as words; an unknown one loses its dots rather than show as code. */
const historyWords = (a: string) => HISTORY_WORDS[a] ?? a.replace(/^investigation\./, "").replace(/[._]/g, " ");

export function HistoryCard({ inv }: { inv: Investigation }) {
  return (
    <Card title="History">
      {inv.history.length ? (
        <ol className="space-y-1 text-sm" data-testid="investigation-history">
          {inv.history.map((h, i) => (
            <li key={i} className="flex flex-wrap gap-x-3">
              <span className="whitespace-nowrap tabular-nums text-ink-600">{dateTime(h.at)}</span>
              <span className="font-semibold">{h.by ?? "the system"}</span>
              <span title={h.action}>{historyWords(h.action)}</span>
            </li>
          ))}
        </ol>
      ) : (
        <p className="text-sm text-ink-600">Nothing recorded yet.</p>
      )}
    </Card>
  );
}

export function Section({ children }: { children: ReactNode }) {
  return <div className="grid gap-5 xl:grid-cols-2">{children}</div>;
}
