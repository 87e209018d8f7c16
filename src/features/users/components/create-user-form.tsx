import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { createUserSchema, type CreateUserInput } from "@shared/api/users";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { ApiError } from "@/lib/api-client";
import { useCreateUser } from "../api/users.queries";
import { RolePicker } from "./role-picker";

export function CreateUserForm({ onDone }: { onDone: () => void }) {
  const create = useCreateUser();
  const form = useForm<CreateUserInput>({
    resolver: zodResolver(createUserSchema),
    defaultValues: { name: "", email: "", roles: [], password: "" },
  });
  const submit = form.handleSubmit(async (values) => {
    try {
      await create.mutateAsync(values);
      form.reset();
      onDone();
    } catch (err) {
      if (err instanceof ApiError && err.status === 409) form.setError("email", { message: err.message });
    }
  });
  const serverError = create.error instanceof ApiError && create.error.status !== 409 ? create.error.message : null;
  return (
    <form onSubmit={submit} noValidate className="space-y-4" aria-label="New user">
      {serverError ? <Notice tone="error">{serverError}</Notice> : null}
      <div className="grid gap-4 md:grid-cols-2">
        <TextField label="Name" {...form.register("name")} error={form.formState.errors.name?.message} />
        <TextField label="E-mail" type="email" autoComplete="off" {...form.register("email")} error={form.formState.errors.email?.message} />
      </div>
      <div>
        <div className="mb-1 text-sm font-semibold text-ink-800">Roles</div>
        <Controller
          control={form.control}
          name="roles"
          render={({ field }) => <RolePicker name="new-user-roles" value={field.value} onChange={field.onChange} />}
        />
        {form.formState.errors.roles ? (
          <p role="alert" className="mt-1 text-sm font-medium text-alarm-700">
            {form.formState.errors.roles.message}
          </p>
        ) : null}
      </div>
      <TextField
        label="First password"
        type="password"
        autoComplete="new-password"
        hint="At least 10 characters. Give it to the person in confidence; they can change it later."
        {...form.register("password")}
        error={form.formState.errors.password?.message}
      />
      <div className="flex gap-2">
        <Button type="submit" disabled={form.formState.isSubmitting}>
          {form.formState.isSubmitting ? "Creating…" : "Create user"}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
