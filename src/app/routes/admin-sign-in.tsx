import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { signInSettingsSchema, type AdminSignIn, type SignInSettings } from "@shared/api/sign-in-admin";
import type { Role } from "@shared/roles";
import { MutationError } from "@/components/mutation-form";
import { Button } from "@/components/ui/button";
import { Card, Fact, PageHeader } from "@/components/ui/card";
import { TextField } from "@/components/ui/field";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { signInKeys, useSaveSignInSettings } from "@/features/users/api/sign-in.queries";
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
  const settings = useQuery(signInKeys.settings());
  return (
    <div className="space-y-5">
      <PageHeader
        title="Sign-in"
        subtitle="How people sign in: through the plant's identity provider, with their roles taken from its groups, and who may still use a Strandsight password."
      />
      {settings.isPending ? (
        <Spinner />
      ) : settings.isError ? (
        <Notice tone="error">{settings.error.message}</Notice>
      ) : (
        <SignInSettingsForm key={JSON.stringify(settings.data)} data={settings.data} />
      )}
      <p className="text-xs text-ink-600">
        Every change here is recorded in the audit log with your name, the time and the settings before and after; so is every role a person gets from their
        groups at sign-in.
      </p>
    </div>
  );
}

function ProviderCard({ provider }: { provider: AdminSignIn["provider"] }) {
  return (
    <Card title="Identity provider">
      {provider ? (
        <div className="space-y-3">
          <dl className="grid gap-3 sm:grid-cols-2">
            <Fact label="Issuer">
              <span className="break-all font-mono text-sm">{provider.issuer}</span>
            </Fact>
            <Fact label="Button">Sign in with {provider.name}</Fact>
            <Fact label="Client id">
              <span className="break-all font-mono text-sm">{provider.clientId}</span>
            </Fact>
            <Fact label="Group claim">
              <span className="font-mono text-sm">{provider.groupClaim}</span>
            </Fact>
            <Fact label="Redirect address to register at the provider">
              <span className="break-all font-mono text-sm">{provider.redirectUrl}</span>
            </Fact>
          </dl>
          {provider.local ? (
            <Notice tone="caution">
              This is the local fake identity provider for trying things out: anyone who reaches it can sign in as one of its invented people. Set OIDC_ISSUER
              to the plant's provider before real use.
            </Notice>
          ) : null}
        </div>
      ) : (
        <p className="text-sm text-ink-700">
          No identity provider is set up: everyone signs in with a Strandsight password. The server's administrator sets one up with OIDC_ISSUER, OIDC_CLIENT_ID
          and OIDC_CLIENT_SECRET (see the README); the mapping below can be prepared already.
        </p>
      )}
    </Card>
  );
}

function SignInSettingsForm({ data }: { data: AdminSignIn }) {
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
      <Card title="Groups and roles">
        <p className="mb-3 text-sm text-ink-700">
          A person gets every role mapped to any of their groups, at each sign-in through the identity provider. Someone in no mapped group gets no role and
          sees only a note to ask an administrator. A change here applies from each person's next sign-in.
        </p>
        {rows.length === 0 ? <p className="mb-3 text-sm text-ink-600">No group is mapped yet.</p> : null}
        <ul className="space-y-4">
          {rows.map((r, i) => (
            <li key={i} className="rounded-md border border-ink-200 p-3" aria-label={`Group ${i + 1}`}>
              <div className="flex flex-wrap items-end gap-3">
                <div className="min-w-56 flex-1">
                  <TextField label="Group, as the provider sends it" value={r.group} onChange={(e) => setRow(i, { group: e.target.value })} />
                </div>
                <Button variant="ghost" onClick={() => setRows((rs) => rs.filter((_, j) => j !== i))}>
                  Remove
                </Button>
              </div>
              <div className="mt-2">
                <RolePicker name={`roles-${i}`} value={r.roles} onChange={(roles: Role[]) => setRow(i, { roles })} />
              </div>
              {r.roles.length === 0 ? <p className="mt-1 text-xs text-ink-600">No role ticked: this group gives nothing.</p> : null}
            </li>
          ))}
        </ul>
        <Button variant="secondary" className="mt-3" onClick={() => setRows((rs) => [...rs, { group: "", roles: [] }])}>
          Add a group
        </Button>
      </Card>
      <Card title="Passwords">
        <fieldset className="space-y-2">
          <legend className="mb-2 text-sm text-ink-700">Who may still sign in with a Strandsight password?</legend>
          {(
            [
              ["everyone", "Everyone with a password", "Local accounts sign in as before, beside the identity provider."],
              [
                "administrators",
                "Administrators only",
                `Everyone else must use the identity provider. Keep at least one administrator with a password for a day the provider is down.${
                  data.provider ? "" : " Possible only once an identity provider is set up."
                }`,
              ],
            ] as const
          ).map(([value, label, hint]) => (
            <label key={value} className="flex min-h-11 cursor-pointer items-start gap-3 rounded-md border border-ink-200 p-3">
              <input
                type="radio"
                name="localPasswords"
                value={value}
                checked={localPasswords === value}
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
      {problem ? <Notice tone="error">{problem}</Notice> : null}
      <MutationError mutation={save} title="Not saved" />
      {save.isSuccess ? <Notice tone="ok">Saved. The mapping applies from each person's next sign-in.</Notice> : null}
      <Button size="lg" onClick={onSave} disabled={save.isPending}>
        {save.isPending ? "Saving…" : "Save sign-in settings"}
      </Button>
    </div>
  );
}

export const ErrorBoundary = RouteError;
