import type { QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link, useNavigate, useSearchParams } from "react-router";
import { Card, PageHeader } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { NewClaimForm } from "@/features/claims/components/new-claim-form";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "claims.manage");
    return null;
  };
}

/** /claims/new?products=K1,K2 — the trace screen may name the coils already. */
export function Component() {
  const { t } = useTranslation("claims");
  const navigate = useNavigate();
  const [sp] = useSearchParams();
  return (
    <div className="space-y-5">
      <div>
        <Link to="/claims" className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {t("allClaims")}
        </Link>
      </div>
      <PageHeader title={t("newPage.title")} subtitle={t("newPage.subtitle")} />
      <Notice tone="info" title={t("procedure.title")}>
        {t("procedure.text")}
      </Notice>
      <Card>
        <NewClaimForm initialProducts={sp.get("products") ?? ""} onCreated={(c) => navigate(`/claims/${c.id}`)} onCancel={() => navigate("/claims")} />
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
