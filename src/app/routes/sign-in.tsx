import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { Link, useNavigate, useSearchParams } from "react-router";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Logo } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { homeFor, safeNext } from "@/config/nav";
import { authKeys, useSignIn } from "@/features/auth/api/session";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { ApiError } from "@/lib/api-client";

const signInSchema = z.object({
  email: z.string().trim().min(1, "Enter your e-mail address.").email("This is not an e-mail address."),
  password: z.string().min(1, "Enter your password."),
});
type SignInForm = z.infer<typeof signInSchema>;

export { RouteError as ErrorBoundary } from "./route-error";

export function Component() {
  const navigate = useNavigate();
  const [params] = useSearchParams();
  const qc = useQueryClient();
  const signIn = useSignIn();
  const about = useQuery(plantKeys.about());
  const form = useForm<SignInForm>({ resolver: zodResolver(signInSchema), defaultValues: { email: "", password: "" } });

  const onSubmit = form.handleSubmit(async (values) => {
    await signIn.mutateAsync(values);
    const me = await qc.fetchQuery(authKeys.me());
    const roles = me?.roles ?? [];
    const next = params.get("next");
    navigate(safeNext(next, roles) ?? homeFor(roles), { replace: true });
  });

  const error = signIn.error instanceof ApiError ? signIn.error.message : signIn.error ? "Sign-in failed." : null;

  return (
    <main className="grid min-h-dvh md:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <section className="flex flex-col justify-between bg-ink-900 px-8 py-10 text-ink-100">
        <div className="flex items-center gap-3">
          <Logo className="h-10 w-10" />
          <span className="text-2xl font-bold tracking-tight text-white">Strandsight</span>
        </div>
        <div className="my-10 max-w-md">
          <p className="text-xl font-semibold leading-snug text-white">Every slab defect, joined to the heat and the casting conditions it came from.</p>
          <p className="mt-3 text-sm text-ink-300">Yard inspection, quality statistics, root causes and customer claims in one place.</p>
        </div>
        <p className="text-xs text-ink-400">{about.data?.works ?? " "}</p>
      </section>
      <section className="flex items-center justify-center px-6 py-10">
        <form onSubmit={onSubmit} noValidate className="w-full max-w-sm space-y-5" aria-label="Sign in">
          <h1 className="text-2xl font-bold text-ink-900">Sign in</h1>
          {error ? <Notice tone="error">{error}</Notice> : null}
          {!error && params.get("expired") ? <Notice tone="info">Your session ended. Please sign in again.</Notice> : null}
          <TextField label="E-mail" type="email" autoComplete="username" large {...form.register("email")} error={form.formState.errors.email?.message} />
          <TextField
            label="Password"
            type="password"
            autoComplete="current-password"
            large
            {...form.register("password")}
            error={form.formState.errors.password?.message}
          />
          <Button type="submit" size="lg" className="w-full" disabled={form.formState.isSubmitting}>
            {form.formState.isSubmitting ? "Signing in…" : "Sign in"}
          </Button>
          <p className="text-center">
            <Link
              to="/forgot-password"
              className="inline-flex min-h-11 items-center text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
            >
              Forgot your password?
            </Link>
          </p>
          {about.data?.demo && about.data.demoAccounts.length > 0 ? (
            <div className="rounded-md border border-dashed border-ink-300 bg-white p-3 text-sm text-ink-700">
              <p className="font-semibold">Invented demo plant — demo sign-ins</p>
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
                    <span className="text-ink-500">— {a.role}</span>
                  </li>
                ))}
              </ul>
              <p className="mt-1 text-xs text-ink-600" data-testid="demo-password">
                {about.data.demoPassword ? (
                  <>
                    The password of every demo sign-in is <strong className="font-mono text-ink-900">{about.data.demoPassword}</strong>.
                  </>
                ) : (
                  "The password is the one set in DEMO_PASSWORD when the demo was seeded."
                )}
              </p>
            </div>
          ) : null}
        </form>
      </section>
    </main>
  );
}
