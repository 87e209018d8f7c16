import { lazy, Suspense, useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { RISK_CATEGORY_KEYS, type RiskModel, type TrainRiskModelBody } from "@shared/api/risk";
import { can } from "@shared/roles";
import { CATEGORICAL_LABELS, VARIABLES, type CategoricalKey } from "@shared/variables";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { ProgressBar } from "@/components/ui/progress";
import { authKeys } from "@/features/auth/api/session";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { Figure } from "@/features/reports/components/figure";
import { riskKeys, useActivateRiskModel, useTrainRiskModel } from "@/features/risk/api/risk.queries";
import { DriftPanel } from "@/features/risk/components/drift-panel";
import { DASH, date, dateTime, num, pct, sig } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { useLevelName } from "@/i18n/levels";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";
import { DefectTargetOptions } from "@/features/defects/components/defect-target-options";
import { DateRangeFields } from "@/components/ui/date-field";

const ReliabilityChart = lazy(() => import("@/features/risk/components/reliability-chart").then((m) => ({ default: m.ReliabilityChart })));

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "risk.models.read");
    void qc.prefetchQuery(riskKeys.list());
    void qc.prefetchQuery(catalogueKeys.list());
    return null;
  };
}

const CONDITIONS = VARIABLES.filter((v) => v.group === "condition" || v.group === "geometry");
const DEFAULT_CONDITIONS = ["casting_speed_m_min", "superheat_c", "embr_current_a", "sen_depth_mm", "argon_nl_min", "mold_level_sd_mm"];

function TrainForm({ onStart, onDone }: { onStart: () => void; onDone: (id: number | null) => void }) {
  const { t } = useTranslation("process");
  const { term, variable } = useTerms();
  const catalogue = useQuery(catalogueKeys.list());
  const train = useTrainRiskModel();
  const [target, setTarget] = useState("");
  const [conditions, setConditions] = useState<string[]>(DEFAULT_CONDITIONS);
  const [categories, setCategories] = useState<string[]>(["grade_family", "strand"]);
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  // A cast date typed that is no day: training waits (an empty date would mean no limit at all).
  const [datesRead, setDatesRead] = useState(true);
  const toggle = (list: string[], set: (v: string[]) => void, key: string) => set(list.includes(key) ? list.filter((k) => k !== key) : [...list, key]);
  const submit = () => {
    if (!datesRead) return;
    const [kind, code] = target.split(":") as ["type" | "category", string];
    const body: TrainRiskModelBody = {
      targetKind: kind,
      targetCode: code,
      conditions,
      categories: categories as TrainRiskModelBody["categories"],
      knots: 4,
      ...(from ? { from } : {}),
      ...(to ? { to } : {}),
    };
    onStart();
    train.mutate(body, { onSuccess: (m) => onDone(m.id), onError: () => onDone(null) });
  };
  const types = catalogue.data?.types ?? [];
  const cats = catalogue.data?.categories ?? [];
  return (
    <form
      className="space-y-4"
      onSubmit={(e) => {
        e.preventDefault();
        submit();
      }}
    >
      <div className="flex flex-col gap-1">
        <label htmlFor="risk-target" className="text-sm font-semibold text-ink-800">
          {t("risk.train.target")}
        </label>
        <select
          id="risk-target"
          required
          value={target}
          onChange={(e) => setTarget(e.target.value)}
          className="min-h-11 rounded-md border border-ink-300 bg-white px-3"
        >
          <option value="">{t("risk.train.chooseTarget")}</option>
          <DefectTargetOptions categories={cats} types={types} />
        </select>
      </div>
      <fieldset>
        <legend className="text-sm font-semibold text-ink-800">{t("risk.train.conditions", { knots: 4 })}</legend>
        <div className="mt-1 grid gap-1 sm:grid-cols-2">
          {CONDITIONS.map((v) => (
            <label key={v.key} className="flex min-h-9 items-center gap-2 text-sm">
              <input type="checkbox" checked={conditions.includes(v.key)} onChange={() => toggle(conditions, setConditions, v.key)} />
              {variable(v.key)} ({v.unit})
            </label>
          ))}
        </div>
      </fieldset>
      <fieldset>
        <legend className="text-sm font-semibold text-ink-800">{t("risk.train.categories")}</legend>
        <div className="mt-1 grid gap-1 sm:grid-cols-2">
          {RISK_CATEGORY_KEYS.map((k) => (
            <label key={k} className="flex min-h-9 items-center gap-2 text-sm">
              <input type="checkbox" checked={categories.includes(k)} onChange={() => toggle(categories, setCategories, k)} />
              {term("riskCategories", k)}
            </label>
          ))}
        </div>
      </fieldset>
      <div className="flex flex-wrap gap-4">
        <DateRangeFields
          fromLabel={t("risk.train.castFrom")}
          toLabel={t("risk.train.castUntil")}
          from={from}
          to={to}
          onFrom={setFrom}
          onTo={setTo}
          onReadable={setDatesRead}
        />
      </div>
      <p className="text-sm text-ink-700">{t("risk.train.holdout", { days: 14 })}</p>
      {train.isError ? <Notice tone="error">{train.error.message}</Notice> : null}
      <Button type="submit" disabled={train.isPending || !target || !datesRead}>
        {train.isPending ? t("risk.train.training") : t("risk.train.submit")}
      </Button>
    </form>
  );
}

function ModelDetail({ id, canTrain }: { id: number; canTrain: boolean }) {
  const { t } = useTranslation("process");
  const { term, variable } = useTerms();
  const levelName = useLevelName();
  const detail = useQuery(riskKeys.detail(id));
  const activate = useActivateRiskModel();
  if (detail.isPending) return <Spinner label={t("risk.model.loading")} />;
  if (detail.isError) return <Notice tone="error">{detail.error.message}</Notice>;
  const m = detail.data;
  const v = m.validation;
  // A level's column as the model names it ("Strand: CC1 strand 2"): the term and the level as the screens name them.
  const columnName = (column: string) => {
    for (const c of m.categories) {
      const label = CATEGORICAL_LABELS[c.key as CategoricalKey];
      if (label && column.startsWith(`${label}: `)) return `${variable(c.key)}: ${levelName(column.slice(label.length + 2))}`;
    }
    // A numeric condition ("Casting speed") and its spline terms ("Casting speed (spline 1)"), as the model names them.
    for (const c of m.conditions) {
      if (column === c.label) return variable(c.key);
      const spline = column.startsWith(`${c.label} (spline `) ? /^ \(spline (\d+)\)$/.exec(column.slice(c.label.length)) : null;
      if (spline) return t("risk.model.splineTerm", { name: variable(c.key), n: spline[1] });
    }
    return column;
  };
  return (
    <div className="space-y-4" data-testid="risk-model-detail">
      <p className="text-sm text-ink-800">
        {t("risk.model.trained", {
          target: m.targetName,
          version: m.version,
          at: dateTime(m.finishedAt),
          by: m.trainedByName ?? DASH,
          from: date(m.trainFrom),
          to: date(m.trainTo),
        })}
        {m.active ? t("risk.model.switchedOn", { at: dateTime(m.activatedAt), by: m.activatedByName ?? DASH }) : ""}
      </p>
      {m.status === "failed" ? <Notice tone="error">{m.error}</Notice> : null}
      {v ? (
        <>
          <div className="grid gap-2 sm:grid-cols-3">
            <Figure
              label={t("risk.model.auc")}
              value={sig(v.auc, 3)}
              note={v.aucCiLower !== null ? t("risk.model.aucInterval", { lower: sig(v.aucCiLower, 3), upper: sig(v.aucCiUpper, 3) }) : undefined}
            />
            <Figure label={t("risk.model.baselineAuc")} value={sig(v.baselineAuc, 3)} note={t("risk.model.sameTestSlabs")} />
            <Figure label={t("risk.model.brier")} value={sig(v.brier, 3)} note={t("risk.model.brierNote", { baseline: sig(v.baselineBrier, 3) })} />
            <Figure
              label={t("risk.model.slope")}
              value={sig(v.calibrationSlope, 3)}
              note={t("risk.model.slopeNote", { intercept: sig(v.calibrationIntercept, 3) })}
            />
            <Figure label={t("risk.model.capture")} value={pct(v.captureTop10, 0)} note={t("risk.model.captureNote", { value: pct(v.captureTop20, 0) })} />
            <Figure
              label={t("risk.model.testSlabs")}
              value={num(v.testSlabs)}
              note={t("risk.model.testSlabsNote", { affected: num(v.testAffected), trained: num(v.trainSlabs) })}
            />
          </div>
          {m.beatsBaseline ? (
            <Notice tone="info" title={t("risk.model.better")}>
              {t("risk.model.betterText")}
            </Notice>
          ) : (
            <Notice tone="caution" title={t("risk.model.notBetter")}>
              {t("risk.model.notBetterText")}
            </Notice>
          )}
          {v.notes.length ? <Notice tone="caution">{v.notes.join(" ")}</Notice> : null}
          {v.reliability.length ? (
            <Suspense fallback={<Spinner label={t("ui.loadingChart")} />}>
              <ReliabilityChart validation={v} />
            </Suspense>
          ) : null}
          {m.bands ? (
            <p className="text-sm text-ink-800">
              {t("risk.model.bands", {
                high: term("riskBands", "high"),
                highFrom: pct(m.bands.high, 1),
                raised: term("riskBands", "raised").toLowerCase(),
                raisedFrom: pct(m.bands.raised, 1),
              })}
            </p>
          ) : null}
        </>
      ) : null}
      {canTrain && m.status === "ready" && !m.active ? (
        <div className="space-y-2">
          <Button onClick={() => activate.mutate(m.id)} disabled={!m.beatsBaseline || activate.isPending}>
            {activate.isPending ? t("risk.model.switchingOn") : t("risk.model.switchOn", { version: m.version })}
          </Button>
          {activate.isError ? <Notice tone="error">{activate.error.message}</Notice> : null}
        </div>
      ) : null}
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold text-ink-800">{t("risk.model.method")}</summary>
        <p className="mt-2 text-ink-800">{m.method}</p>
        <table className="mt-2 text-sm">
          <thead>
            <tr>
              <th className="pr-4 text-left">{t("risk.model.term")}</th>
              <th className="text-right">{t("risk.model.coefficient")}</th>
            </tr>
          </thead>
          <tbody>
            {m.terms.map((x) => (
              <tr key={x.column}>
                <td className="pr-4">{columnName(x.column)}</td>
                <td className="text-right tabular-nums">{sig(x.coefficient, 4)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </details>
    </div>
  );
}

export function Component() {
  const { t } = useTranslation("process");
  const me = useQuery(authKeys.me());
  const canTrain = me.data ? can(me.data.roles, "risk.train") : false;
  const [training, setTraining] = useState(false);
  const list = useQuery(riskKeys.list(training));
  const [open, setOpen] = useState<number | null>(null);
  const items = list.data?.items ?? [];
  const inFlight = items.find((m) => m.status === "training");
  const shown = open ?? items.find((m) => m.active)?.id ?? items[0]?.id ?? null;
  return (
    <div className="space-y-5">
      <PageHeader title={t("risk.title")} subtitle={t("risk.subtitle")} />
      <Notice tone="caution" title={t("ui.readWithCare")}>
        {t("risk.caution")}
      </Notice>
      <Card title={t("risk.versions")}>
        {list.isPending ? (
          <Spinner label={t("risk.loadingModels")} />
        ) : list.isError ? (
          <Notice tone="error">{list.error.message}</Notice>
        ) : items.length === 0 ? (
          <p className="text-ink-700">{t("risk.noModel")}</p>
        ) : (
          <ul className="divide-y divide-ink-200" data-testid="risk-model-list">
            {items.map((m: Omit<RiskModel, "terms">) => (
              <li key={m.id} className="flex flex-wrap items-center gap-3 py-2">
                <button
                  type="button"
                  className="min-h-11 text-left font-semibold text-strand-700 underline"
                  onClick={() => setOpen(m.id)}
                  aria-current={shown === m.id ? "true" : undefined}
                >
                  {t("risk.listItem", { target: m.targetName, version: m.version })}
                </button>
                <span className="text-sm text-ink-800">
                  {m.status === "training"
                    ? t("risk.trainingProgress", { progress: pct(m.progress, 0) })
                    : m.status === "failed"
                      ? t("risk.failed")
                      : t(m.beatsBaseline ? "risk.aucAgainst" : "risk.aucAgainstNotBetter", {
                          auc: sig(m.validation?.auc, 3),
                          baseline: sig(m.validation?.baselineAuc, 3),
                        })}
                </span>
                {m.active ? <span className="rounded bg-strand-100 px-2 py-0.5 text-sm font-semibold text-strand-800">{t("risk.on")}</span> : null}
              </li>
            ))}
          </ul>
        )}
      </Card>
      {shown !== null ? (
        <Card title={t("risk.theVersion")}>
          <ModelDetail id={shown} canTrain={canTrain} />
        </Card>
      ) : null}
      {shown !== null && items.find((m) => m.id === shown)?.status === "ready" ? (
        <Card title={t("risk.driftTitle")}>
          <DriftPanel modelId={shown} />
        </Card>
      ) : null}
      {canTrain ? (
        <Card title={t("risk.train.submit")}>
          <TrainForm
            onStart={() => setTraining(true)}
            onDone={(id) => {
              setTraining(false);
              if (id !== null) setOpen(id);
            }}
          />
          {inFlight ? (
            <div className="mt-3">
              <ProgressBar
                label={t("risk.trainingLabel", { target: inFlight.targetName, version: inFlight.version })}
                value={inFlight.progress}
                detail={inFlight.progressText ?? undefined}
              />
            </div>
          ) : null}
        </Card>
      ) : null}
    </div>
  );
}

export const ErrorBoundary = RouteError;
