import { useQueries, useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useNavigate, useSearchParams } from "react-router";
import { useTranslation } from "react-i18next";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { investigationKeys } from "@/features/investigations/api/investigations.queries";
import { heatList, NewInvestigationForm } from "@/features/investigations/components/new-investigation-form";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "investigations.manage");
    void qc.prefetchQuery(investigationKeys.people());
    return null;
  };
}

/** /investigations/new?heat=H1,H2&defect=12,13 — the heat or slab page it came from names its subjects. */
export function Component() {
  const { t } = useTranslation("process");
  const [sp] = useSearchParams();
  const navigate = useNavigate();
  const heats = heatList(sp.get("heat") ?? "");
  const defectIds = (sp.get("defect") ?? "")
    .split(",")
    .map(Number)
    .filter((n) => Number.isInteger(n) && n > 0);
  const people = useQuery(investigationKeys.people());
  const me = useQuery(authKeys.me());
  const defects = useQueries({ queries: defectIds.map((id) => defectKeys.detail(id)) });
  // Opened from a heat (no defect named): the heat's own defects, offered with one tick.
  const fromHeats = defectIds.length === 0 ? heats.slice(0, 5) : [];
  const heatDefects = useQueries({ queries: fromHeats.map((h) => defectKeys.list({ heat: h, pageSize: 200 })) });
  const waiting = people.isPending || defects.some((d) => d.isPending) || heatDefects.some((d) => d.isPending);
  const failed = people.error ?? defects.find((d) => d.isError)?.error ?? heatDefects.find((d) => d.isError)?.error;
  const ofHeats = heatDefects.flatMap((q) => (q.data?.items ?? []).filter((d) => d.reviewStatus !== "rejected").map((d) => d.id));
  const back = heats.length === 1 && defectIds.length === 0 ? `/heats/${encodeURIComponent(heats[0]!)}` : "/investigations";
  return (
    <div className="space-y-5">
      <div>
        <Link to="/investigations" className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {t("home.allInvestigations")}
        </Link>
      </div>
      <PageHeader title={t("investigations.list.open")} subtitle={t("investigations.new.subtitle")} />
      <Card>
        {waiting ? (
          <Spinner label={t("ui.loading")} />
        ) : failed ? (
          <Notice tone="error">{failed.message}</Notice>
        ) : (
          <NewInvestigationForm
            people={people.data!.people}
            meId={me.data?.id ?? ""}
            heatNos={heats}
            defects={defects.map((d) => ({
              id: d.data!.id,
              label: t("investigations.new.defectLabel", { slab: d.data!.slabId, code: d.data!.typeCode, name: d.data!.typeName }),
            }))}
            heatDefectIds={ofHeats}
            onCreated={(inv) => navigate(`/investigations/${inv.id}`)}
            onCancel={() => navigate(back)}
          />
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
