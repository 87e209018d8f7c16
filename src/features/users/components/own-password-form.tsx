import { useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import { z } from "zod";
import { changeOwnPasswordSchema } from "@shared/api/users";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { ApiError } from "@/lib/api-client";
import { useChangeOwnPassword } from "../api/users.queries";
import { useFormMessage } from "./form-messages";

// The server's rules (shared/api/users.ts), and the new password typed twice (messages shown through useFormMessage).
const formSchema = changeOwnPasswordSchema.and(z.object({ again: z.string() })).refine((v) => v.newPassword === v.again, {
  path: ["again"],
  message: "The two passwords differ. Type the same one twice.",
});
type FormValues = z.infer<typeof formSchema>;

/** The signed-in person's own password: the one they signed in with, then their new one twice. */
export function OwnPasswordForm({ email, firstPassword, onChanged }: { email: string; firstPassword: boolean; onChanged: () => Promise<void> }) {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
  const change = useChangeOwnPassword();
  const form = useForm<FormValues>({ resolver: zodResolver(formSchema), defaultValues: { currentPassword: "", newPassword: "", again: "" } });
  const submit = form.handleSubmit(async ({ currentPassword, newPassword }) => {
    try {
      await change.mutateAsync({ currentPassword, newPassword });
    } catch (err) {
      if (err instanceof ApiError && err.code === "wrong_current_password") form.setError("currentPassword", { message: err.message });
      return;
    }
    try {
      await onChanged();
    } catch {
      form.setError("root", { message: t("passwords.own.notOpened") });
    }
  });
  const serverError =
    change.error instanceof ApiError && change.error.code !== "wrong_current_password"
      ? change.error.message
      : change.error && !(change.error instanceof ApiError)
        ? t("passwords.own.notChanged")
        : null;
  return (
    <form noValidate className="space-y-4" aria-label={t("passwords.own.formLabel")} onSubmit={submit}>
      {serverError ? <Notice tone="error">{serverError}</Notice> : null}
      {form.formState.errors.root?.message ? <Notice tone="error">{form.formState.errors.root.message}</Notice> : null}
      {/* Whose password this is, for the browser's password manager. */}
      <input type="text" name="username" autoComplete="username" value={email} readOnly hidden />
      <TextField
        label={firstPassword ? t("passwords.own.firstPassword") : t("passwords.own.currentPassword")}
        type="password"
        autoComplete="current-password"
        large
        {...form.register("currentPassword")}
        error={message(form.formState.errors.currentPassword?.message)}
      />
      <TextField
        label={t("passwords.own.newPassword")}
        type="password"
        autoComplete="new-password"
        large
        hint={t("passwords.own.newPasswordHint")}
        {...form.register("newPassword")}
        error={message(form.formState.errors.newPassword?.message)}
      />
      <TextField
        label={t("passwords.own.again")}
        type="password"
        autoComplete="new-password"
        large
        {...form.register("again")}
        error={message(form.formState.errors.again?.message)}
      />
      <Button type="submit" size="lg" className="w-full" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? t("passwords.own.saving") : t("passwords.own.save")}
      </Button>
    </form>
  );
}
