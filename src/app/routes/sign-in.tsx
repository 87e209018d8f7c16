import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useMemo, useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link, useNavigate, useSearchParams } from "react-router";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Logo } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { homeFor, safeNext } from "@/config/nav";
import { authKeys, useSignIn } from "@/features/auth/api/session";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { ssoErrorKey } from "@/features/auth/sso-errors";
import { api, ApiError } from "@/lib/api-client";
import { SSO_PROVIDER_ID } from "@shared/api/sign-in";
import { ROLE_LABELS, ROLES } from "@shared/roles";
import { settled } from "@/components/mutation-form";

const signInSchemaIn = (t: TFunction) =>
  z.object({
    email: z.string().trim().min(1, t("signIn.enterEmail")).email(t("signIn.notEmail")),
    password: z.string().min(1, t("signIn.enterPassword")),
  });
type SignInForm = z.infer<ReturnType<typeof signInSchemaIn>>;

export { RouteError as ErrorBoundary } from "./route-error";

const ssoStartSchema = z.object({ url: z.string().url() });

/**
 * Single sign-on: the server answers the identity provider's address (this sign-in's state and PKCE
 * verifier kept in a cookie) and the browser goes there; the provider sends it back to
 * /api/auth/callback/plant, which signs in and continues at `next`, or comes back here with ?error=.
 */
function useSsoSignIn() {
  return useMutation({
    mutationFn: async (next: string) => {
      const r = await api("/auth/sign-in/social", {
        method: "POST",
        body: { provider: SSO_PROVIDER_ID, callbackURL: next, errorCallbackURL: "/sign-in" },
        schema: ssoStartSchema,
      });
      window.location.assign(r.url);
    },
  });
}

export function Component() {
  const { t } = useTranslation();
  const signInSchema = useMemo(() => signInSchemaIn(t), [t]);
  const navigate = useNavigate();
  const [params] = useSearchParams();
  const qc = useQueryClient();
  const signIn = useSignIn();
  const sso = useSsoSignIn();
  const about = useQuery(plantKeys.about());
  const [showPassword, setShowPassword] = useState(false);
  const ssoOption = about.data?.signIn.sso ?? null;
  // Passwords kept for administrators only: the form waits behind a button.
  const passwordsClosed = ssoOption !== null && about.data?.signIn.localPasswords === "administrators" && !showPassword;
  const next = params.get("next");
  // The server names a demo account's role in English (ROLE_LABELS); shown in the page's language.
  const roleWords = (label: string) => {
    const key = ROLES.find((r) => ROLE_LABELS[r] === label);
    return key ? t(`roles.${key}`) : label;
  };
  const startSso = () => sso.mutate(next?.startsWith("/") && !next.startsWith("//") ? next : "/");
  const form = useForm<SignInForm>({ resolver: zodResolver(signInSchema), defaultValues: { email: "", password: "" } });

  const onSubmit = form.handleSubmit(async (values) => {
    // A refusal is said under the form (signIn.error).
    if (!(await settled(signIn.mutateAsync(values)))) return;
    const me = await qc.fetchQuery(authKeys.me());
    const roles = me?.roles ?? [];
    const next = params.get("next");
    navigate(safeNext(next, roles) ?? homeFor(roles), { replace: true });
  });

  const returnedError = params.get("error");
  const error =
    signIn.error instanceof ApiError
      ? signIn.error.message
      : signIn.error
        ? t("signIn.failed")
        : sso.error instanceof ApiError
          ? sso.error.message
          : sso.error
            ? t("signIn.providerUnreachable")
            : returnedError
              ? t(ssoErrorKey(returnedError).key, { code: ssoErrorKey(returnedError).code })
              : null;

  return (
    <main className="grid min-h-dvh md:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <section className="flex flex-col justify-between bg-ink-900 px-8 py-10 text-ink-100">
        <div className="flex items-center gap-3">
          <Logo className="h-10 w-10" />
          <span className="text-2xl font-bold tracking-tight text-white">Strandsight</span>
        </div>
        <div className="my-10 max-w-md">
          <p className="text-xl font-semibold leading-snug text-white">{t("product.tagline")}</p>
          <p className="mt-3 text-sm text-ink-300">{t("product.taglineMore")}</p>
        </div>
        <p className="text-xs text-ink-400">{about.data?.works ?? " "}</p>
      </section>
      <section className="flex items-center justify-center px-6 py-10">
        <form onSubmit={onSubmit} noValidate className="w-full max-w-sm space-y-5" aria-label={t("signIn.formLabel")}>
          <h1 className="text-2xl font-bold text-ink-900">{t("signIn.title")}</h1>
          {error ? <Notice tone="error">{error}</Notice> : null}
          {!error && params.get("expired") ? <Notice tone="info">{t("signIn.sessionEnded")}</Notice> : null}
          {ssoOption ? (
            <>
              <Button size="lg" className="w-full" onClick={startSso} disabled={sso.isPending || sso.isSuccess}>
                {sso.isPending || sso.isSuccess ? t("signIn.goingToProvider") : t("signIn.withProvider", { name: ssoOption.name })}
              </Button>
              {passwordsClosed ? (
                <p className="text-center text-sm text-ink-600">
                  {t("signIn.passwordsForAdmins")}{" "}
                  <button type="button" className="min-h-11 font-semibold text-strand-700 underline underline-offset-2" onClick={() => setShowPassword(true)}>
                    {t("signIn.adminPassword")}
                  </button>
                </p>
              ) : (
                <p className="flex items-center gap-3 text-xs font-semibold uppercase tracking-wide text-ink-500" aria-hidden>
                  <span className="h-px flex-1 bg-ink-200" />
                  {t("signIn.orPassword")}
                  <span className="h-px flex-1 bg-ink-200" />
                </p>
              )}
            </>
          ) : null}
          {passwordsClosed ? null : (
            <>
              <TextField
                label={t("signIn.email")}
                type="email"
                autoComplete="username"
                large
                {...form.register("email")}
                error={form.formState.errors.email?.message}
              />
              <TextField
                label={t("signIn.password")}
                type="password"
                autoComplete="current-password"
                large
                {...form.register("password")}
                error={form.formState.errors.password?.message}
              />
              <Button type="submit" size="lg" variant={ssoOption ? "secondary" : "primary"} className="w-full" disabled={form.formState.isSubmitting}>
                {form.formState.isSubmitting ? t("signIn.submitting") : t("signIn.submit")}
              </Button>
            </>
          )}
          <p className="text-center">
            <Link
              to="/forgot-password"
              className="inline-flex min-h-11 items-center text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
            >
              {t("signIn.forgot")}
            </Link>
          </p>
          {ssoOption?.localPeople ? (
            <div className="rounded-md border border-dashed border-ink-300 bg-white p-3 text-sm text-ink-700" data-testid="fake-provider-people">
              <p className="font-semibold">{t("signIn.fakePeople")}</p>
              <ul className="mt-1 space-y-0.5">
                {ssoOption.localPeople.map((p) => (
                  <li key={p.login}>
                    <span className="font-mono text-ink-900">{p.login}</span> <span className="text-ink-500">— {p.groups.join(", ")}</span>
                  </li>
                ))}
              </ul>
            </div>
          ) : null}
          {about.data?.demo && about.data.demoAccounts.length > 0 ? (
            <div className="rounded-md border border-dashed border-ink-300 bg-white p-3 text-sm text-ink-700">
              <p className="font-semibold">{t("signIn.demoTitle")}</p>
              <ul className="mt-1 space-y-0.5">
                {about.data.demoAccounts.map((a) => (
                  <li key={a.email}>
                    <button
                      type="button"
                      className="min-h-8 text-left text-strand-700 underline underline-offset-2"
                      onClick={() => form.setValue("email", a.email)}
                    >
                      {a.email}
                    </button>{" "}
                    <span className="text-ink-500">— {roleWords(a.role)}</span>
                  </li>
                ))}
              </ul>
              <p className="mt-1 text-xs text-ink-600" data-testid="demo-password">
                {about.data.demoPassword ? (
                  <Trans
                    i18nKey="signIn.demoPassword"
                    values={{ password: about.data.demoPassword }}
                    components={{ 1: <strong className="font-mono text-ink-900" /> }}
                  />
                ) : (
                  t("signIn.demoPasswordSet")
                )}
              </p>
            </div>
          ) : null}
        </form>
      </section>
    </main>
  );
}
