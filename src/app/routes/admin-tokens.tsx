import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
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
  const tokens = useQuery(tokenKeys.list());
  const [created, setCreated] = useState<(ApiToken & { token: string }) | null>(null);
  return (
    <div className="space-y-5">
      <PageHeader
        title="API tokens"
        subtitle="Tokens let the plant's level-2 system send heats, slabs and process samples (and, when ticked, the rolling mill's products) to Strandsight without a person signing in. Each token sends only the kinds ticked when it was made."
      />
      <div className="grid gap-5 lg:grid-cols-[minmax(0,1fr)_minmax(0,2fr)]">
        <Card title="New token">
          {created ? <TokenReveal created={created} onDone={() => setCreated(null)} /> : <CreateTokenForm onCreated={setCreated} />}
        </Card>
        <Card title="Tokens">
          {tokens.isPending ? <Spinner /> : tokens.isError ? <Notice tone="error">{tokens.error.message}</Notice> : <TokensTable tokens={tokens.data.tokens} />}
        </Card>
      </div>
      <p className="text-xs text-ink-600">Creating and revoking tokens is recorded in the audit log with your name and the time.</p>
    </div>
  );
}

export const ErrorBoundary = RouteError;
