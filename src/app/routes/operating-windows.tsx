import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { WINDOW_RECORD_DAYS, type OperatingWindow } from "@shared/api/operating-windows";
import { can } from "@shared/roles";
import { VARIABLES } from "@shared/variables";
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
import { count, DASH, date, formatLocale, lowerFirst } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";
import { DateRangeFields } from "@/components/ui/date-field";

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
  const { t } = useTranslation("process");
  const retire = useRetireWindow();
  const [asking, setAsking] = useState(false);
  if (!asking) {
    return (
      <Button variant="secondary" onClick={() => setAsking(true)}>
        {t("causes.editor.retire")}
      </Button>
    );
  }
  return (
    <div
      className="w-full space-y-2 rounded-md border border-alarm-700 bg-alarm-100 p-3 text-sm"
      role="group"
      aria-label={t("causes.editor.retireLabel", { name: rule.name })}
    >
      <p>{t("windows.retireAsk", { name: rule.name })}</p>
      {retire.isError ? <Notice tone="error">{retire.error.message}</Notice> : null}
      <div className="flex flex-wrap gap-2">
        <Button variant="danger" disabled={retire.isPending} onClick={() => retire.mutate(rule.id)}>
          {retire.isPending ? t("windows.retiring") : t("windows.retireYes")}
        </Button>
        <Button variant="ghost" onClick={() => setAsking(false)}>
          {t("ui.keepIt")}
        </Button>
      </div>
    </div>
  );
}

function RuleCard({ rule, canManage }: { rule: OperatingWindow; canManage: boolean }) {
  const { t } = useTranslation("process");
  const [editing, setEditing] = useState(false);
  const choices = useChoices();
  return (
    <Card
      title={rule.name}
      actions={
        <span className="rounded bg-ink-100 px-2 py-0.5 text-sm font-semibold text-ink-800">
          {rule.familyCode ? t("windows.family", { code: rule.familyCode }) : t("windows.everyFamily")}
        </span>
      }
    >
      <div className="space-y-3" data-testid="window-rule">
        {editing ? (
          <WindowForm {...choices} rule={rule} onDone={() => setEditing(false)} />
        ) : (
          <>
            <dl className="grid gap-2 text-sm sm:grid-cols-[10rem_1fr]">
              <dt className="font-semibold text-ink-700">{t("windows.flagsWhen")}</dt>
              <dd className="text-ink-900" data-testid="window-text">
                <ConditionsText conditions={rule.conditions} />
              </dd>
              <dt className="font-semibold text-ink-700">{t("windows.gradeFamily")}</dt>
              <dd className="text-ink-900">{rule.familyCode ? `${rule.familyCode} — ${rule.familyName ?? ""}` : t("windows.everyFamily")}</dd>
              <dt className="font-semibold text-ink-700">{t("windows.watches")}</dt>
              <dd className="text-ink-900">
                {rule.target
                  ? t("windows.target", { name: rule.target.name, kind: rule.target.kind === "type" ? rule.target.code : t("windows.category") })
                  : t("windows.anyDefect")}
              </dd>
              {rule.note ? (
                <>
                  <dt className="font-semibold text-ink-700">{t("windows.note")}</dt>
                  <dd className="text-ink-900">{rule.note}</dd>
                </>
              ) : null}
              <dt className="font-semibold text-ink-700">{t("windows.written")}</dt>
              <dd className="text-ink-700">
                {rule.updatedAt !== rule.createdAt
                  ? t("windows.writtenByChanged", { date: date(rule.createdAt), name: rule.createdByName ?? DASH, changed: date(rule.updatedAt) })
                  : t("windows.writtenBy", { date: date(rule.createdAt), name: rule.createdByName ?? DASH })}
              </dd>
            </dl>
            {rule.record ? (
              <WindowRecordView record={rule.record} />
            ) : (
              <p className="text-sm text-ink-700">{t("windows.retired", { date: date(rule.retiredAt) })}</p>
            )}
            {canManage && !rule.retiredAt ? (
              <div className="flex flex-wrap gap-2">
                <Button variant="secondary" onClick={() => setEditing(true)}>
                  {t("ui.change")}
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

/**
 * A rule's conditions in the reader's words ("Superheat above 30.0 °C and casting speed above 1.50 m/min"):
 * the screens' name of each variable, the catalogue's digits (finer where the rule was written finer),
 * the decimal sign of the language. The answer's `text` is the same in English, for API readers.
 */
function ConditionsText({ conditions }: { conditions: OperatingWindow["conditions"] }) {
  const { t, i18n } = useTranslation("process");
  const { variable } = useTerms();
  const said = conditions.map((c, i) => {
    const spec = VARIABLES.find((v) => v.key === c.variable);
    const digits = spec && Number(c.value.toFixed(spec.digits)) === c.value ? spec.digits : (String(c.value).split(".")[1]?.length ?? 0);
    const value = new Intl.NumberFormat(formatLocale(), { useGrouping: false, minimumFractionDigits: digits, maximumFractionDigits: digits }).format(c.value);
    const name = variable(c.variable);
    const label = i > 0 && i18n.language === "en" ? lowerFirst(name) : name;
    return t(`windows.condition.${c.op}`, { label, value, unit: c.unit ? ` ${c.unit}` : "" });
  });
  return <>{said.reduce((first, next) => t("windows.condition.and", { first, next }))}</>;
}

export function Component() {
  const { t } = useTranslation("process");
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
        title={t("windows.title")}
        subtitle={t("windows.subtitle")}
        actions={
          canManage && !writing ? (
            <Button onClick={() => setWriting(true)} disabled={items.length >= (list.data?.liveLimit ?? Infinity)}>
              {t("windows.form.write")}
            </Button>
          ) : null
        }
      />
      <Notice tone="caution" title={t("ui.readWithCare")}>
        {t("windows.caution")}
      </Notice>
      {writing ? (
        <Card title={t("windows.form.write")}>
          <WindowForm {...choices} onDone={() => setWriting(false)} />
        </Card>
      ) : null}
      <Card title={t("windows.historyCovered")}>
        <div className="flex flex-wrap items-end gap-4">
          <DateRangeFields fromLabel={t("windows.castFrom")} toLabel={t("windows.castUntil")} from={from} to={to} onFrom={setFrom} onTo={setTo} />
          <p className="text-sm text-ink-700">{from || to ? "" : t("windows.lastDays", { n: count(WINDOW_RECORD_DAYS) })}</p>
        </div>
      </Card>
      {list.isPending ? (
        <Spinner label={t("windows.loading")} />
      ) : list.isError ? (
        <Notice tone="error">{list.error.message}</Notice>
      ) : items.length === 0 ? (
        <Card>
          <p className="text-ink-700">{canManage ? t("windows.noneYetManage") : t("windows.noneYet")}</p>
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
