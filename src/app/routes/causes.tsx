import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { causeKeys } from "@/features/causes/api/causes.queries";
import { CauseTagsEditor, NewCauseTagForm } from "@/features/causes/components/cause-tags-editor";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "causes.read");
    void qc.prefetchQuery(causeKeys.taxonomy(true));
    return null;
  };
}

export function Component() {
  const taxonomy = useQuery(causeKeys.taxonomy(true));
  const me = useQuery(authKeys.me());
  const canEdit = me.data ? can(me.data.roles, "causes.tag") : false;
  const [adding, setAdding] = useState(false);
  const tags = taxonomy.data?.groups.flatMap((g) => g.tags) ?? [];
  return (
    <div className="space-y-5">
      <PageHeader
        title="Cause tags"
        subtitle={
          taxonomy.data
            ? `${tags.filter((t) => !t.retired).length} tags in use, ${tags.filter((t) => t.retired).length} retired. A tag that was ever used can be retired, not deleted: old taggings keep their name.`
            : "The causes defects are tagged with, by group."
        }
        actions={
          canEdit ? (
            <div className="flex flex-wrap gap-2">
              <Link
                to="/causes/untagged"
                className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
              >
                Defects without a cause
              </Link>
              {!adding ? <Button onClick={() => setAdding(true)}>New cause tag</Button> : null}
            </div>
          ) : null
        }
      />
      {!canEdit && me.data ? <Notice>You can read the cause tags; process engineers and administrators maintain them.</Notice> : null}
      {adding && taxonomy.data ? (
        <Card title="New cause tag">
          <NewCauseTagForm taxonomy={taxonomy.data} onDone={() => setAdding(false)} />
        </Card>
      ) : null}
      {taxonomy.isPending ? (
        <Spinner label="Loading the cause tags" />
      ) : taxonomy.isError ? (
        <Notice tone="error">{taxonomy.error.message}</Notice>
      ) : (
        <CauseTagsEditor taxonomy={taxonomy.data} canEdit={canEdit} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
