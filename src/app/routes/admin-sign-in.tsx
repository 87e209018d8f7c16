import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { signInSettingsSchema, type AdminSignIn, type SignInSettings } from "@shared/api/sign-in-admin";
import type { Role } from "@shared/roles";
import { MutationError } from "@/components/mutation-form";
import { Button } from "@/components/ui/button";
import { Card, Fact, PageHeader } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { signInKeys, useSaveSignInSettings } from "@/features/users/api/sign-in.queries";
import { formMessage } from "@/features/users/components/form-messages";
import { RolePicker } from "@/features/users/components/role-picker";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "users.manage");
    void qc.prefetchQuery(signInKeys.settings());
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("admin");
  const settings = useQuery(signInKeys.settings());
  return (
    <div className="space-y-5">
      <PageHeader title={t("signInAdmin.title")} subtitle={t("signInAdmin.subtitle")} />
      {settings.isPending ? (
        <Spinner />
      ) : settings.isError ? (
        <Notice tone="error">{settings.error.message}</Notice>
      ) : (
        <SignInSettingsForm key={JSON.stringify(settings.data)} data={settings.data} />
      )}
      <p className="text-xs text-ink-600">{t("signInAdmin.audited")}</p>
    </div>
  );
}

function ProviderCard({ provider }: { provider: AdminSignIn["provider"] }) {
  const { t } = useTranslation("admin");
  return (
    <Card title={t("signInAdmin.provider.title")}>
      {provider ? (
        <div className="space-y-3">
          <dl className="grid gap-3 sm:grid-cols-2">
            <Fact label={t("signInAdmin.provider.issuer")}>
              <span className="break-all font-mono text-sm">{provider.issuer}</span>
            </Fact>
            <Fact label={t("signInAdmin.provider.button")}>{t("signInAdmin.provider.buttonText", { name: provider.name })}</Fact>
            <Fact label={t("signInAdmin.provider.clientId")}>
              <span className="break-all font-mono text-sm">{provider.clientId}</span>
            </Fact>
            <Fact label={t("signInAdmin.provider.groupClaim")}>
              <span className="font-mono text-sm">{provider.groupClaim}</span>
            </Fact>
            <Fact label={t("signInAdmin.provider.redirect")}>
              <span className="break-all font-mono text-sm">{provider.redirectUrl}</span>
            </Fact>
          </dl>
          {provider.local ? <Notice tone="caution">{t("signInAdmin.provider.local")}</Notice> : null}
        </div>
      ) : (
        <p className="text-sm text-ink-700">{t("signInAdmin.provider.none")}</p>
      )}
    </Card>
  );
}

function SignInSettingsForm({ data }: { data: AdminSignIn }) {
  const { t } = useTranslation("admin");
  const save = useSaveSignInSettings();
  const [rows, setRows] = useState<SignInSettings["groupRoles"]>(data.groupRoles);
  const [localPasswords, setLocalPasswords] = useState<SignInSettings["localPasswords"]>(data.localPasswords);
  const [problem, setProblem] = useState<string | null>(null);
  const setRow = (i: number, next: Partial<SignInSettings["groupRoles"][number]>) => setRows((rs) => rs.map((r, j) => (j === i ? { ...r, ...next } : r)));

  const onSave = () => {
    const parsed = signInSettingsSchema.safeParse({ groupRoles: rows, localPasswords });
    if (!parsed.success) {
      setProblem(parsed.error.issues[0]?.message ?? "Check the mapping.");
      return;
    }
    setProblem(null);
    save.mutate(parsed.data);
  };

  return (
    <div className="space-y-5">
      <ProviderCard provider={data.provider} />
      <Card title={t("signInAdmin.groups.title")}>
        <p className="mb-3 text-sm text-ink-700">{t("signInAdmin.groups.intro")}</p>
        {rows.length === 0 ? <p className="mb-3 text-sm text-ink-600">{t("signInAdmin.groups.none")}</p> : null}
        <ul className="space-y-4">
          {rows.map((r, i) => (
            <li key={i} className="rounded-md border border-ink-200 p-3" aria-label={t("signInAdmin.groups.group", { n: i + 1 })}>
              <div className="flex flex-wrap items-end gap-3">
                <div className="min-w-56 flex-1">
                  <TextField label={t("signInAdmin.groups.groupName")} value={r.group} onChange={(e) => setRow(i, { group: e.target.value })} />
                </div>
                <Button variant="ghost" onClick={() => setRows((rs) => rs.filter((_, j) => j !== i))}>
                  {t("signInAdmin.groups.remove")}
                </Button>
              </div>
              <div className="mt-2">
                <RolePicker name={`roles-${i}`} value={r.roles} onChange={(roles: Role[]) => setRow(i, { roles })} />
              </div>
              {r.roles.length === 0 ? <p className="mt-1 text-xs text-ink-600">{t("signInAdmin.groups.noRole")}</p> : null}
            </li>
          ))}
        </ul>
        <Button variant="secondary" className="mt-3" onClick={() => setRows((rs) => [...rs, { group: "", roles: [] }])}>
          {t("signInAdmin.groups.add")}
        </Button>
      </Card>
      <Card title={t("signInAdmin.passwords.title")}>
        <fieldset className="space-y-2">
          <legend className="mb-2 text-sm text-ink-700">{t("signInAdmin.passwords.legend")}</legend>
          {(
            [
              ["everyone", t("signInAdmin.passwords.everyone"), t("signInAdmin.passwords.everyoneHint")],
              [
                "administrators",
                t("signInAdmin.passwords.administrators"),
                data.provider ? t("signInAdmin.passwords.administratorsHint") : t("signInAdmin.passwords.administratorsHintNoProvider"),
              ],
            ] as const
          ).map(([value, label, hint]) => (
            <label key={value} className="flex min-h-11 cursor-pointer items-start gap-3 rounded-md border border-ink-200 p-3">
              <input
                type="radio"
                name="localPasswords"
                value={value}
                checked={localPasswords === value}
                // Passwords for administrators alone only once an identity provider is set up (the server refuses it before).
                disabled={value === "administrators" && !data.provider && localPasswords !== "administrators"}
                onChange={() => setLocalPasswords(value)}
                className="mt-1 h-5 w-5 accent-strand-700"
              />
              <span>
                <span className="block font-semibold text-ink-900">{label}</span>
                <span className="block text-sm text-ink-600">{hint}</span>
              </span>
            </label>
          ))}
        </fieldset>
      </Card>
      {problem ? <Notice tone="error">{formMessage(t, problem)}</Notice> : null}
      <MutationError mutation={save} title={t("signInAdmin.notSaved")} />
      {save.isSuccess ? <Notice tone="ok">{t("signInAdmin.saved")}</Notice> : null}
      <Button size="lg" onClick={onSave} disabled={save.isPending}>
        {save.isPending ? t("signInAdmin.saving") : t("signInAdmin.save")}
      </Button>
    </div>
  );
}

export const ErrorBoundary = RouteError;
