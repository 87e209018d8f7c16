import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useRequestPasswordReset } from "@/features/auth/api/session";
import { PasswordFrame } from "@/features/auth/components/password-frame";
import { useFormMessage } from "@/features/users/components/form-messages";

// Its messages are shown in the screen's language through useFormMessage.
const schema = z.object({ email: z.string().trim().min(1, "Enter your e-mail address.").email("This is not an e-mail address.") });

export { RouteError as ErrorBoundary } from "./route-error";

export function Component() {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
  const request = useRequestPasswordReset();
  const form = useForm<z.infer<typeof schema>>({ resolver: zodResolver(schema), defaultValues: { email: "" } });
  if (request.isSuccess) {
    return (
      <PasswordFrame title={t("passwords.forgot.sentTitle")}>
        <div data-testid="reset-requested">
          <Notice tone="ok" title={t("passwords.forgot.sent")}>
            {t("passwords.forgot.sentText", { email: request.variables })}
          </Notice>
        </div>
        <p className="text-sm text-ink-700">{t("passwords.forgot.nothing")}</p>
      </PasswordFrame>
    );
  }
  return (
    <PasswordFrame title={t("passwords.forgot.title")}>
      <p className="text-sm text-ink-700">{t("passwords.forgot.intro")}</p>
      <form noValidate className="space-y-4" aria-label={t("passwords.forgot.formLabel")} onSubmit={form.handleSubmit((v) => request.mutate(v.email))}>
        {request.isError ? <Notice tone="error">{request.error.message}</Notice> : null}
        <TextField
          label={t("passwords.forgot.email")}
          type="email"
          autoComplete="username"
          large
          {...form.register("email")}
          error={message(form.formState.errors.email?.message)}
        />
        <Button type="submit" size="lg" className="w-full" disabled={request.isPending}>
          {request.isPending ? t("passwords.forgot.sending") : t("passwords.forgot.send")}
        </Button>
      </form>
    </PasswordFrame>
  );
}
