import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { userKeys } from "@/features/users/api/users.queries";
import { CreateUserForm } from "@/features/users/components/create-user-form";
import { UsersTable } from "@/features/users/components/users-table";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "users.manage");
    void qc.prefetchQuery(userKeys.list());
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("admin");
  const [creating, setCreating] = useState(false);
  const users = useQuery(userKeys.list());
  const me = useQuery(authKeys.me());
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("users.title")}
        subtitle={t("users.subtitle")}
        actions={!creating ? <Button onClick={() => setCreating(true)}>{t("users.newUser")}</Button> : null}
      />
      {creating ? (
        <Card title={t("users.newUser")}>
          <CreateUserForm onDone={() => setCreating(false)} />
        </Card>
      ) : null}
      <Card>
        {users.isPending ? (
          <Spinner />
        ) : users.isError ? (
          <Notice tone="error">{users.error.message}</Notice>
        ) : (
          <UsersTable users={users.data.users} currentUserId={me.data?.id ?? ""} />
        )}
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
