import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import type { ApiToken } from "@shared/api/tokens";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { tokenKeys } from "@/features/tokens/api/tokens.queries";
import { CreateTokenForm, TokenReveal, TokensTable } from "@/features/tokens/components/tokens";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "tokens.manage");
    void qc.prefetchQuery(tokenKeys.list());
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("admin");
  const tokens = useQuery(tokenKeys.list());
  const [created, setCreated] = useState<(ApiToken & { token: string }) | null>(null);
  return (
    <div className="space-y-5">
      <PageHeader title={t("tokens.title")} subtitle={t("tokens.subtitle")} />
      <div className="grid gap-5 lg:grid-cols-[minmax(0,1fr)_minmax(0,2fr)]">
        <Card title={t("tokens.newToken")}>
          {created ? <TokenReveal created={created} onDone={() => setCreated(null)} /> : <CreateTokenForm onCreated={setCreated} />}
        </Card>
        <Card title={t("tokens.tokens")}>
          {tokens.isPending ? <Spinner /> : tokens.isError ? <Notice tone="error">{tokens.error.message}</Notice> : <TokensTable tokens={tokens.data.tokens} />}
        </Card>
      </div>
      <p className="text-xs text-ink-600">{t("tokens.audited")}</p>
    </div>
  );
}

export const ErrorBoundary = RouteError;
