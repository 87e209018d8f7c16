import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link, useSearchParams } from "react-router";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useResetPassword } from "@/features/auth/api/session";
import { ApiError } from "@/lib/api-client";
import { PasswordFrame } from "@/features/auth/components/password-frame";
import { formMessage } from "@/features/users/components/form-messages";

const MIN = 10;
// Its messages are shown in the screen's language through formMessage.
const schema = z
  .object({
    newPassword: z.string().min(MIN, `Use at least ${MIN} characters.`).max(128, "Use at most 128 characters."),
    again: z.string(),
  })
  .refine((v) => v.newPassword === v.again, { message: "The two passwords differ. Type the same one twice.", path: ["again"] });

export { RouteError as ErrorBoundary } from "./route-error";

/** A refusal that means the link is spent: the person needs a new one. */
const isLinkProblem = (err: unknown) => err instanceof ApiError && (/token/i.test(err.code) || /token/i.test(err.message));

/** What the server's refusal means for the person holding the link. */
function explain(t: TFunction, err: unknown): string {
  if (isLinkProblem(err)) return t("passwords.reset.linkProblem");
  if (err instanceof ApiError) return err.message;
  return t("passwords.reset.notSet");
}

export function Component() {
  const { t } = useTranslation("admin");
  const [sp] = useSearchParams();
  const token = sp.get("token") ?? "";
  const linkError = sp.get("error");
  const reset = useResetPassword();
  const form = useForm<z.infer<typeof schema>>({ resolver: zodResolver(schema), defaultValues: { newPassword: "", again: "" } });

  if (reset.isSuccess) {
    return (
      <PasswordFrame title={t("passwords.reset.doneTitle")}>
        <div data-testid="reset-done">
          <Notice tone="ok" title={t("passwords.reset.done")}>
            {t("passwords.reset.doneText")}
          </Notice>
        </div>
        <Link
          to="/sign-in"
          className="flex min-h-14 w-full items-center justify-center rounded-md bg-strand-700 px-6 text-base font-semibold text-white hover:bg-strand-800"
        >
          {t("passwords.reset.signIn")}
        </Link>
      </PasswordFrame>
    );
  }
  if (linkError || !token) {
    return (
      <PasswordFrame title={t("passwords.reset.title")}>
        <div data-testid="reset-link-problem">
          <Notice tone="error">{linkError ? t("passwords.reset.linkProblem") : t("passwords.reset.needsLink")}</Notice>
        </div>
        <Link
          to="/forgot-password"
          className="inline-flex min-h-11 items-center font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
        >
          {t("passwords.reset.askNewLink")}
        </Link>
      </PasswordFrame>
    );
  }
  return (
    <PasswordFrame title={t("passwords.reset.title")}>
      <form
        noValidate
        className="space-y-4"
        aria-label={t("passwords.reset.formLabel")}
        onSubmit={form.handleSubmit((v) => reset.mutate({ token, newPassword: v.newPassword }))}
      >
        {reset.isError ? (
          <div data-testid="reset-error" className="space-y-2">
            <Notice tone="error">{explain(t, reset.error)}</Notice>
            {isLinkProblem(reset.error) ? (
              <Link to="/forgot-password" className="inline-flex min-h-11 items-center font-semibold text-strand-700 underline">
                {t("passwords.reset.askNewLink")}
              </Link>
            ) : null}
          </div>
        ) : null}
        <TextField
          label={t("passwords.reset.newPassword")}
          type="password"
          autoComplete="new-password"
          large
          hint={t("passwords.reset.newPasswordHint", { min: MIN })}
          {...form.register("newPassword")}
          error={formMessage(t, form.formState.errors.newPassword?.message)}
        />
        <TextField
          label={t("passwords.reset.again")}
          type="password"
          autoComplete="new-password"
          large
          {...form.register("again")}
          error={formMessage(t, form.formState.errors.again?.message)}
        />
        <Button type="submit" size="lg" className="w-full" disabled={reset.isPending}>
          {reset.isPending ? t("passwords.reset.saving") : t("passwords.reset.save")}
        </Button>
      </form>
    </PasswordFrame>
  );
}
