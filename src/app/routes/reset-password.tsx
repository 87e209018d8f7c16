import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link, useSearchParams } from "react-router";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useResetPassword } from "@/features/auth/api/session";
import { ApiError } from "@/lib/api-client";
import { PasswordFrame } from "@/features/auth/components/password-frame";

const MIN = 10;
const schema = z
  .object({
    newPassword: z.string().min(MIN, `Use at least ${MIN} characters.`).max(128, "Use at most 128 characters."),
    again: z.string(),
  })
  .refine((v) => v.newPassword === v.again, { message: "The two passwords differ. Type the same one twice.", path: ["again"] });

export { RouteError as ErrorBoundary } from "./route-error";

const linkProblem = "This link has expired or was already used. Ask for a new one.";

/** What the server's refusal means for the person holding the link. */
function explain(err: unknown): string {
  if (err instanceof ApiError) {
    if (/token/i.test(err.code) || /token/i.test(err.message)) return linkProblem;
    return err.message;
  }
  return "The password could not be set. Try again.";
}

export function Component() {
  const [sp] = useSearchParams();
  const token = sp.get("token") ?? "";
  const linkError = sp.get("error");
  const reset = useResetPassword();
  const form = useForm<z.infer<typeof schema>>({ resolver: zodResolver(schema), defaultValues: { newPassword: "", again: "" } });

  if (reset.isSuccess) {
    return (
      <PasswordFrame title="Password changed">
        <div data-testid="reset-done">
          <Notice tone="ok" title="Done">
            Your new password is set. Sign in with it.
          </Notice>
        </div>
        <Link
          to="/sign-in"
          className="flex min-h-14 w-full items-center justify-center rounded-md bg-strand-700 px-6 text-base font-semibold text-white hover:bg-strand-800"
        >
          Sign in
        </Link>
      </PasswordFrame>
    );
  }
  if (linkError || !token) {
    return (
      <PasswordFrame title="Set a new password">
        <div data-testid="reset-link-problem">
          <Notice tone="error">
            {linkError ? linkProblem : "This page needs the link from the mail. Open the link in the message, or ask for a new one."}
          </Notice>
        </div>
        <Link
          to="/forgot-password"
          className="inline-flex min-h-11 items-center font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
        >
          Ask for a new link
        </Link>
      </PasswordFrame>
    );
  }
  return (
    <PasswordFrame title="Set a new password">
      <form
        noValidate
        className="space-y-4"
        aria-label="Set a new password"
        onSubmit={form.handleSubmit((v) => reset.mutate({ token, newPassword: v.newPassword }))}
      >
        {reset.isError ? (
          <div data-testid="reset-error" className="space-y-2">
            <Notice tone="error">{explain(reset.error)}</Notice>
            {explain(reset.error) === linkProblem ? (
              <Link to="/forgot-password" className="inline-flex min-h-11 items-center font-semibold text-strand-700 underline">
                Ask for a new link
              </Link>
            ) : null}
          </div>
        ) : null}
        <TextField
          label="New password"
          type="password"
          autoComplete="new-password"
          large
          hint={`At least ${MIN} characters. A few unrelated words make a password that is long and easy to remember.`}
          {...form.register("newPassword")}
          error={form.formState.errors.newPassword?.message}
        />
        <TextField
          label="The new password again"
          type="password"
          autoComplete="new-password"
          large
          {...form.register("again")}
          error={form.formState.errors.again?.message}
        />
        <Button type="submit" size="lg" className="w-full" disabled={reset.isPending}>
          {reset.isPending ? "Saving…" : "Set the new password"}
        </Button>
      </form>
    </PasswordFrame>
  );
}
