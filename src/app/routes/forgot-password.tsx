import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { z } from "zod";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useRequestPasswordReset } from "@/features/auth/api/session";
import { PasswordFrame } from "@/features/auth/components/password-frame";

const schema = z.object({ email: z.string().trim().min(1, "Enter your e-mail address.").email("This is not an e-mail address.") });

export { RouteError as ErrorBoundary } from "./route-error";

export function Component() {
  const request = useRequestPasswordReset();
  const form = useForm<z.infer<typeof schema>>({ resolver: zodResolver(schema), defaultValues: { email: "" } });
  if (request.isSuccess) {
    return (
      <PasswordFrame title="Check your mail">
        <div data-testid="reset-requested">
          <Notice tone="ok" title="Sent">
            If an account exists for {request.variables}, a message with a link to set a new password is on its way. The link works for a limited time.
          </Notice>
        </div>
        <p className="text-sm text-ink-700">Nothing after a few minutes? Look in the spam folder, or ask your administrator.</p>
      </PasswordFrame>
    );
  }
  return (
    <PasswordFrame title="Forgot your password?">
      <p className="text-sm text-ink-700">Enter the e-mail address you sign in with. We send a link to set a new password.</p>
      <form noValidate className="space-y-4" aria-label="Ask for a reset link" onSubmit={form.handleSubmit((v) => request.mutate(v.email))}>
        {request.isError ? <Notice tone="error">{request.error.message}</Notice> : null}
        <TextField label="E-mail" type="email" autoComplete="username" large {...form.register("email")} error={form.formState.errors.email?.message} />
        <Button type="submit" size="lg" className="w-full" disabled={request.isPending}>
          {request.isPending ? "Sending…" : "Send the link"}
        </Button>
      </form>
    </PasswordFrame>
  );
}
