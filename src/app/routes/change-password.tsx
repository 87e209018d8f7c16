import { useQuery, useQueryClient, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { useNavigate, useSearchParams, type LoaderFunctionArgs } from "react-router";
import { Button } from "@/components/ui/button";
import { Logo } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { homeFor, safeNext } from "@/config/nav";
import { signedInOrToSignIn } from "./app-layout.loader";
import { authKeys, useSignOut } from "@/features/auth/api/session";
import { OwnPasswordForm } from "@/features/users/components/own-password-form";

export { RouteError as ErrorBoundary } from "./route-error";

/**
 * Choosing one's own password. The app's frame sends a person here while the password they signed in
 * with was set by an administrator (app-layout.loader.ts); nothing else opens until then, on the
 * server too (server/middleware/require-role.ts). Signed out, it is the sign-in page's business.
 */
export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await signedInOrToSignIn(qc, request);
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("admin");
  const qc = useQueryClient();
  const { data: me } = useQuery(authKeys.me());
  const navigate = useNavigate();
  const [sp] = useSearchParams();
  const signOut = useSignOut();
  if (!me) return null;
  const first = me.mustChangePassword === true;

  const afterChange = async () => {
    // The session goes on with the fresh cookie the server sent: read who is signed in again.
    await qc.invalidateQueries({ queryKey: authKeys.all });
    const now = await qc.ensureQueryData(authKeys.me());
    const roles = now?.roles ?? me.roles;
    const next = sp.get("next");
    const to = next?.startsWith("/change-password") ? null : safeNext(next, roles);
    navigate(to ?? homeFor(roles), { replace: true });
  };

  return (
    <main className="flex min-h-dvh flex-col items-center bg-ink-50 px-6 py-10">
      <div className="mb-8 flex items-center gap-3">
        <Logo className="h-10 w-10" />
        <span className="text-2xl font-bold tracking-tight text-ink-900">Strandsight</span>
      </div>
      <section className="w-full max-w-md space-y-5 rounded-lg border border-ink-200 bg-white p-6 shadow-sm" data-testid="change-password">
        <h1 className="text-2xl font-bold text-ink-900">{first ? t("passwords.change.titleFirst") : t("passwords.change.title")}</h1>
        {first ? (
          <Notice tone="info" title={t("passwords.change.welcome", { name: me.name })}>
            {t("passwords.change.welcomeText")}
          </Notice>
        ) : null}
        <OwnPasswordForm email={me.email} firstPassword={first} onChanged={afterChange} />
      </section>
      <Button
        variant="ghost"
        className="mt-6 min-h-11"
        disabled={signOut.isPending}
        onClick={() => signOut.mutate(undefined, { onSuccess: () => void navigate("/sign-in", { replace: true }) })}
      >
        {signOut.isPending ? t("passwords.change.signingOut") : t("passwords.change.signOut")}
      </Button>
    </main>
  );
}
