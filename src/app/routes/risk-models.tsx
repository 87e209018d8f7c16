import { lazy, Suspense, useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { RISK_BAND_LABELS, RISK_CATEGORY_KEYS, RISK_CATEGORY_LABELS, RISK_CAUTION, type RiskModel, type TrainRiskModelBody } from "@shared/api/risk";
import { can } from "@shared/roles";
import { VARIABLES } from "@shared/variables";
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
import { date, dateTime, num, pct, sig } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";
import { DefectTargetOptions } from "@/features/defects/components/defect-target-options";

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
  const catalogue = useQuery(catalogueKeys.list());
  const train = useTrainRiskModel();
  const [target, setTarget] = useState("");
  const [conditions, setConditions] = useState<string[]>(DEFAULT_CONDITIONS);
  const [categories, setCategories] = useState<string[]>(["grade_family", "strand"]);
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const toggle = (list: string[], set: (v: string[]) => void, key: string) => set(list.includes(key) ? list.filter((k) => k !== key) : [...list, key]);
  const submit = () => {
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
          What the model predicts
        </label>
        <select
          id="risk-target"
          required
          value={target}
          onChange={(e) => setTarget(e.target.value)}
          className="min-h-11 rounded-md border border-ink-300 bg-white px-3"
        >
          <option value="">Choose a defect type or category…</option>
          <DefectTargetOptions categories={cats} types={types} />
        </select>
      </div>
      <fieldset>
        <legend className="text-sm font-semibold text-ink-800">Conditions (each as a smooth curve: restricted cubic spline, 4 knots)</legend>
        <div className="mt-1 grid gap-1 sm:grid-cols-2">
          {CONDITIONS.map((v) => (
            <label key={v.key} className="flex min-h-9 items-center gap-2 text-sm">
              <input type="checkbox" checked={conditions.includes(v.key)} onChange={() => toggle(conditions, setConditions, v.key)} />
              {v.label} ({v.unit})
            </label>
          ))}
        </div>
      </fieldset>
      <fieldset>
        <legend className="text-sm font-semibold text-ink-800">Categories</legend>
        <div className="mt-1 grid gap-1 sm:grid-cols-2">
          {RISK_CATEGORY_KEYS.map((k) => (
            <label key={k} className="flex min-h-9 items-center gap-2 text-sm">
              <input type="checkbox" checked={categories.includes(k)} onChange={() => toggle(categories, setCategories, k)} />
              {RISK_CATEGORY_LABELS[k]}
            </label>
          ))}
        </div>
      </fieldset>
      <div className="flex flex-wrap gap-4">
        <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
          Cast from (optional)
          <input type="date" value={from} onChange={(e) => setFrom(e.target.value)} className="min-h-11 rounded-md border border-ink-300 px-3 font-normal" />
        </label>
        <label className="flex flex-col gap-1 text-sm font-semibold text-ink-800">
          Cast until (optional)
          <input type="date" value={to} onChange={(e) => setTo(e.target.value)} className="min-h-11 rounded-md border border-ink-300 px-3 font-normal" />
        </label>
      </div>
      <p className="text-sm text-ink-700">
        The newest quarter of the judged slabs is held back and the model is judged on it alone; slabs of the last 14 days are left out until the yard has seen
        them all.
      </p>
      {train.isError ? <Notice tone="error">{train.error.message}</Notice> : null}
      <Button type="submit" disabled={train.isPending || !target}>
        {train.isPending ? "Training…" : "Train a new version"}
      </Button>
    </form>
  );
}

function ModelDetail({ id, canTrain }: { id: number; canTrain: boolean }) {
  const detail = useQuery(riskKeys.detail(id));
  const activate = useActivateRiskModel();
  if (detail.isPending) return <Spinner label="Loading the model" />;
  if (detail.isError) return <Notice tone="error">{detail.error.message}</Notice>;
  const m = detail.data;
  const v = m.validation;
  return (
    <div className="space-y-4" data-testid="risk-model-detail">
      <p className="text-sm text-ink-800">
        {m.targetName}, version {m.version} · trained {dateTime(m.finishedAt)} by {m.trainedByName ?? "—"} on slabs cast {date(m.trainFrom)} – {date(m.trainTo)}
        {m.active ? ` · switched on ${dateTime(m.activatedAt)} by ${m.activatedByName ?? "—"}` : ""}
      </p>
      {m.status === "failed" ? <Notice tone="error">{m.error}</Notice> : null}
      {v ? (
        <>
          <div className="grid gap-2 sm:grid-cols-3">
            <Figure
              label="ROC AUC on the test slabs"
              value={sig(v.auc, 3)}
              note={v.aucCiLower !== null ? `95 % interval ${sig(v.aucCiLower, 3)} – ${sig(v.aucCiUpper, 3)} (DeLong)` : undefined}
            />
            <Figure label="Baseline AUC (grade-family rate)" value={sig(v.baselineAuc, 3)} note="on the same test slabs" />
            <Figure label="Brier score" value={sig(v.brier, 3)} note={`baseline ${sig(v.baselineBrier, 3)}; lower is better`} />
            <Figure label="Calibration slope" value={sig(v.calibrationSlope, 3)} note={`intercept ${sig(v.calibrationIntercept, 3)}; 1 and 0 are ideal`} />
            <Figure label="Defective slabs caught in the riskiest 10 %" value={pct(v.captureTop10, 0)} note={`20 %: ${pct(v.captureTop20, 0)}`} />
            <Figure label="Test slabs" value={num(v.testSlabs)} note={`${num(v.testAffected)} with the defect; trained on ${num(v.trainSlabs)}`} />
          </div>
          {m.beatsBaseline ? (
            <Notice tone="info" title="Better than the baseline">
              The lower end of its AUC interval lies above the grade-family baseline on the newest slabs, which it never saw.
            </Notice>
          ) : (
            <Notice tone="caution" title="Not better than the baseline">
              On the newest slabs this model does not rank better than each slab's grade-family rate, so it cannot be switched on.
            </Notice>
          )}
          {v.notes.length ? <Notice tone="caution">{v.notes.join(" ")}</Notice> : null}
          {v.reliability.length ? (
            <Suspense fallback={<Spinner label="Loading the chart" />}>
              <ReliabilityChart validation={v} />
            </Suspense>
          ) : null}
          {m.bands ? (
            <p className="text-sm text-ink-800">
              Bands: {RISK_BAND_LABELS.high} from {pct(m.bands.high, 1)} (the riskiest 10 % of the test slabs), {RISK_BAND_LABELS.raised.toLowerCase()} from{" "}
              {pct(m.bands.raised, 1)} (the next 20 %).
            </p>
          ) : null}
        </>
      ) : null}
      {canTrain && m.status === "ready" && !m.active ? (
        <div className="space-y-2">
          <Button onClick={() => activate.mutate(m.id)} disabled={!m.beatsBaseline || activate.isPending}>
            {activate.isPending ? "Switching on…" : `Switch on version ${m.version}`}
          </Button>
          {activate.isError ? <Notice tone="error">{activate.error.message}</Notice> : null}
        </div>
      ) : null}
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold text-ink-800">Method and terms</summary>
        <p className="mt-2 text-ink-800">{m.method}</p>
        <table className="mt-2 text-sm">
          <thead>
            <tr>
              <th className="pr-4 text-left">Term</th>
              <th className="text-right">Coefficient (log-odds)</th>
            </tr>
          </thead>
          <tbody>
            {m.terms.map((t) => (
              <tr key={t.column}>
                <td className="pr-4">{t.column}</td>
                <td className="text-right tabular-nums">{sig(t.coefficient, 4)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </details>
    </div>
  );
}

export function Component() {
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
      <PageHeader title="Slab risk models" subtitle="Learnt from the plant's own history, to order the yard's work before inspection." />
      <Notice tone="caution" title="Read with care">
        {RISK_CAUTION}
      </Notice>
      <Card title="Versions">
        {list.isPending ? (
          <Spinner label="Loading the models" />
        ) : list.isError ? (
          <Notice tone="error">{list.error.message}</Notice>
        ) : items.length === 0 ? (
          <p className="text-ink-700">No model trained yet.</p>
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
                  {m.targetName} · version {m.version}
                </button>
                <span className="text-sm text-ink-800">
                  {m.status === "training"
                    ? `training (${pct(m.progress, 0)})`
                    : m.status === "failed"
                      ? "failed"
                      : `AUC ${sig(m.validation?.auc, 3)} against ${sig(m.validation?.baselineAuc, 3)} for the baseline${m.beatsBaseline ? "" : " · not better than the baseline: cannot be switched on"}`}
                </span>
                {m.active ? <span className="rounded bg-strand-100 px-2 py-0.5 text-sm font-semibold text-strand-800">On</span> : null}
              </li>
            ))}
          </ul>
        )}
      </Card>
      {shown !== null ? (
        <Card title="The version">
          <ModelDetail id={shown} canTrain={canTrain} />
        </Card>
      ) : null}
      {shown !== null && items.find((m) => m.id === shown)?.status === "ready" ? (
        <Card title="Drift since training: predicted against found, month by month">
          <DriftPanel modelId={shown} />
        </Card>
      ) : null}
      {canTrain ? (
        <Card title="Train a new version">
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
                label={`Training ${inFlight.targetName}, version ${inFlight.version}`}
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
