import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import { useTranslation } from "react-i18next";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { causeKeys } from "@/features/causes/api/causes.queries";
import { CauseTagsEditor, NewCauseTagForm } from "@/features/causes/components/cause-tags-editor";
import { count } from "@/lib/format";
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
  const { t } = useTranslation("process");
  const taxonomy = useQuery(causeKeys.taxonomy(true));
  const me = useQuery(authKeys.me());
  const canEdit = me.data ? can(me.data.roles, "causes.tag") : false;
  const [adding, setAdding] = useState(false);
  const tags = taxonomy.data?.groups.flatMap((g) => g.tags) ?? [];
  const inUse = tags.filter((x) => !x.retired).length;
  const retired = tags.filter((x) => x.retired).length;
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("causesPage.title")}
        subtitle={taxonomy.data ? t("causesPage.counts", { count: inUse, n: count(inUse), retired: count(retired) }) : t("causesPage.subtitle")}
        actions={
          canEdit ? (
            <div className="flex flex-wrap gap-2">
              <Link
                to="/causes/untagged"
                className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
              >
                {t("causesPage.untagged")}
              </Link>
              {!adding ? <Button onClick={() => setAdding(true)}>{t("causesPage.newTag")}</Button> : null}
            </div>
          ) : null
        }
      />
      {!canEdit && me.data ? <Notice>{t("causesPage.readOnly")}</Notice> : null}
      {adding && taxonomy.data ? (
        <Card title={t("causesPage.newTag")}>
          <NewCauseTagForm taxonomy={taxonomy.data} onDone={() => setAdding(false)} />
        </Card>
      ) : null}
      {taxonomy.isPending ? (
        <Spinner label={t("causes.loadingTags")} />
      ) : taxonomy.isError ? (
        <Notice tone="error">{taxonomy.error.message}</Notice>
      ) : (
        <CauseTagsEditor taxonomy={taxonomy.data} canEdit={canEdit} />
      )}
    </div>
  );
}

export const ErrorBoundary = RouteError;
