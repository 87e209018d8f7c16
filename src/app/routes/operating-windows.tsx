import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { WINDOW_CAUTION, type OperatingWindow } from "@shared/api/operating-windows";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { useRetireWindow, windowKeys } from "@/features/windows/api/windows.queries";
import { WindowForm } from "@/features/windows/components/window-form";
import { WindowRecordView } from "@/features/windows/components/window-record";
import { date } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "windows.read");
    void qc.prefetchQuery(windowKeys.list());
    void qc.prefetchQuery(plantKeys.setup());
    void qc.prefetchQuery(catalogueKeys.list());
    return null;
  };
}

function useChoices() {
  const setup = useQuery(plantKeys.setup());
  const catalogue = useQuery(catalogueKeys.list());
  return {
    families: (setup.data?.gradeFamilies ?? []).map((f) => ({ code: f.code, name: f.name })),
    types: (catalogue.data?.types ?? []).map((t) => ({ code: t.code, name: t.name })),
    categories: (catalogue.data?.categories ?? []).map((c) => ({ code: c.code, name: c.name })),
  };
}

function RetireButton({ rule }: { rule: OperatingWindow }) {
  const retire = useRetireWindow();
  const [asking, setAsking] = useState(false);
  if (!asking) {
    return (
      <Button variant="secondary" onClick={() => setAsking(true)}>
        Retire
      </Button>
    );
  }
  return (
    <div className="w-full space-y-2 rounded-md border border-alarm-700 bg-alarm-100 p-3 text-sm" role="group" aria-label={`Retire ${rule.name}`}>
      <p>
        Retire “{rule.name}”? It flags no slab from now on; its history stays in the audit trail. A retired rule cannot be brought back — write a new one
        instead.
      </p>
      {retire.isError ? <Notice tone="error">{retire.error.message}</Notice> : null}
      <div className="flex flex-wrap gap-2">
        <Button variant="danger" disabled={retire.isPending} onClick={() => retire.mutate(rule.id)}>
          {retire.isPending ? "Retiring…" : "Yes, retire it"}
        </Button>
        <Button variant="ghost" onClick={() => setAsking(false)}>
          Keep it
        </Button>
      </div>
    </div>
  );
}

function RuleCard({ rule, canManage }: { rule: OperatingWindow; canManage: boolean }) {
  const [editing, setEditing] = useState(false);
  const choices = useChoices();
  return (
    <Card
      title={rule.name}
      actions={
        <span className="rounded bg-ink-100 px-2 py-0.5 text-sm font-semibold text-ink-800">
          {rule.familyCode ? `${rule.familyCode} family` : "Every family"}
        </span>
      }
    >
      <div className="space-y-3" data-testid="window-rule">
        {editing ? (
          <WindowForm {...choices} rule={rule} onDone={() => setEditing(false)} />
        ) : (
          <>
            <dl className="grid gap-2 text-sm sm:grid-cols-[10rem_1fr]">
              <dt className="font-semibold text-ink-700">Flags a slab when</dt>
              <dd className="text-ink-900" data-testid="window-text">
                {rule.text}
              </dd>
              <dt className="font-semibold text-ink-700">Grade family</dt>
              <dd className="text-ink-900">{rule.familyCode ? `${rule.familyCode} — ${rule.familyName ?? ""}` : "Every family"}</dd>
              <dt className="font-semibold text-ink-700">Watches</dt>
              <dd className="text-ink-900">
                {rule.target ? `${rule.target.name} (${rule.target.kind === "type" ? rule.target.code : "category"})` : "Any defect"}
              </dd>
              {rule.note ? (
                <>
                  <dt className="font-semibold text-ink-700">Note</dt>
                  <dd className="text-ink-900">{rule.note}</dd>
                </>
              ) : null}
              <dt className="font-semibold text-ink-700">Written</dt>
              <dd className="text-ink-700">
                {date(rule.createdAt)} by {rule.createdByName ?? "—"}
                {rule.updatedAt !== rule.createdAt ? ` · changed ${date(rule.updatedAt)}` : ""}
              </dd>
            </dl>
            {rule.record ? (
              <WindowRecordView record={rule.record} />
            ) : (
              <p className="text-sm text-ink-700">Retired {date(rule.retiredAt)}: it flags nothing.</p>
            )}
            {canManage && !rule.retiredAt ? (
              <div className="flex flex-wrap gap-2">
                <Button variant="secondary" onClick={() => setEditing(true)}>
                  Change
                </Button>
                <RetireButton rule={rule} />
              </div>
            ) : null}
          </>
        )}
      </div>
    </Card>
  );
}

export function Component() {
  const me = useQuery(authKeys.me());
  const canManage = me.data ? can(me.data.roles, "windows.manage") : false;
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [writing, setWriting] = useState(false);
  const list = useQuery(windowKeys.list({ ...(from ? { from } : {}), ...(to ? { to } : {}) }));
  const choices = useChoices();
  const items = list.data?.items ?? [];
  return (
    <div className="space-y-5">
      <PageHeader
        title="Operating windows"
        subtitle="Plain rules per grade family; each slab cast outside a window carries the rule's name, and each rule shows on history whether it earns its keep."
        actions={
          canManage && !writing ? (
            <Button onClick={() => setWriting(true)} disabled={items.length >= (list.data?.liveLimit ?? Infinity)}>
              Write a rule
            </Button>
          ) : null
        }
      />
      <Notice tone="caution" title="Read with care">
        {list.data?.caution ?? WINDOW_CAUTION}
      </Notice>
      {writing ? (
        <Card title="Write a rule">
          <WindowForm {...choices} onDone={() => setWriting(false)} />
        </Card>
      ) : null}
      <Card title="History the records cover">
        <div className="flex flex-wrap items-end gap-4">
          <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
            Cast from
            <input type="date" value={from} onChange={(e) => setFrom(e.target.value)} className="min-h-11 rounded-md border border-ink-300 px-3 font-normal" />
          </label>
          <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
            Cast until
            <input type="date" value={to} onChange={(e) => setTo(e.target.value)} className="min-h-11 rounded-md border border-ink-300 px-3 font-normal" />
          </label>
          <p className="text-sm text-ink-700">{from || to ? "" : "Empty: the last 365 days."}</p>
        </div>
      </Card>
      {list.isPending ? (
        <Spinner label="Loading the rules and their records" />
      ) : list.isError ? (
        <Notice tone="error">{list.error.message}</Notice>
      ) : items.length === 0 ? (
        <Card>
          <p className="text-ink-700">
            No rule written yet.{canManage ? " Write the first one: a grade family, the defect, and the conditions that should not occur together." : ""}
          </p>
        </Card>
      ) : (
        <div className="grid gap-4 xl:grid-cols-2" data-testid="window-list">
          {items.map((w) => (
            <RuleCard key={w.id} rule={w} canManage={canManage} />
          ))}
        </div>
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
