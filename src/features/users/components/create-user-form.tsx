import { useEffect, useId, useRef, useState } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { createUserSchema, type CreatedUser, type CreateUserInput, type FirstSignIn } from "@shared/api/users";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { ApiError } from "@/lib/api-client";
import { useCreateUser } from "../api/users.queries";
import { RolePicker } from "./role-picker";

/** The two ways in, in the words the form offers them (one per account). */
const WAYS: { value: FirstSignIn; label: string; explain: string }[] = [
  {
    value: "invitation",
    label: "Send an invitation",
    explain: "An e-mail with a link where they choose their own password. The link works for one hour; after that, “Forgot your password?” sends a new one.",
  },
  {
    value: "first_password",
    label: "Set a first password",
    explain: "You give it to them in person. At their first sign-in they must choose their own before anything else opens. No e-mail is sent.",
  },
];

/** What the administrator is told once the account exists: whom it is for and how they get in. */
function Confirmation({ created, onAnother, onDone }: { created: CreatedUser; onAnother: () => void; onDone: () => void }) {
  const ref = useRef<HTMLDivElement>(null);
  // The form is replaced by this: keyboard and screen-reader users land on the news, not on nothing.
  useEffect(() => ref.current?.focus(), []);
  const who = `${created.name} (${created.email})`;
  return (
    <div ref={ref} tabIndex={-1} className="space-y-4 outline-none" data-testid="user-created" data-way={created.firstSignIn ?? "own"}>
      {created.firstSignIn === "invitation" && created.invitationQueued === false ? (
        <Notice tone="caution" title="Account created, invitation not sent">
          The account for {who} exists, but its invitation could not be put in the mail queue. Ask them to open the sign-in page and use “Forgot your password?”
          with {created.email}: that sends them a link to choose their password.
        </Notice>
      ) : created.firstSignIn === "invitation" ? (
        <Notice tone="ok">
          Account created for {created.name}: an invitation went to {created.email}. They choose their own password from the link in it (it works for one hour)
          and can sign in after that. The Mail outbox shows when the message has left.
        </Notice>
      ) : (
        <Notice tone="ok">
          Account created for {who}: they sign in with the first password you set and choose a new password at first sign-in, before anything else opens. Give
          them the first password in person. No e-mail was sent.
        </Notice>
      )}
      <div className="flex flex-wrap gap-2">
        <Button onClick={onAnother}>Add another person</Button>
        <Button variant="secondary" onClick={onDone}>
          Done
        </Button>
      </div>
    </div>
  );
}

export function CreateUserForm({ onDone }: { onDone: () => void }) {
  const create = useCreateUser();
  const [created, setCreated] = useState<CreatedUser | null>(null);
  const form = useForm<CreateUserInput>({
    resolver: zodResolver(createUserSchema),
    defaultValues: { name: "", email: "", roles: [], firstSignIn: "invitation" },
    // The first-password field leaves the form when an invitation is chosen: never both ways.
    shouldUnregister: true,
  });
  const way = form.watch("firstSignIn");
  const idBase = useId();
  const submit = form.handleSubmit(async (values) => {
    try {
      setCreated(await create.mutateAsync(values));
      form.reset();
    } catch (err) {
      if (err instanceof ApiError && err.status === 409) form.setError("email", { message: err.message });
    }
  });

  if (created) {
    return (
      <Confirmation
        created={created}
        onAnother={() => {
          create.reset();
          setCreated(null);
        }}
        onDone={onDone}
      />
    );
  }

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
      <fieldset className="space-y-2">
        <legend className="mb-1 text-sm font-semibold text-ink-800">How they get in</legend>
        <div className="grid gap-2 md:grid-cols-2">
          {WAYS.map((w) => (
            // The whole card chooses; the radio is named by its title and described by the explanation.
            <label
              key={w.value}
              className={`flex min-h-12 cursor-pointer gap-3 rounded-md border p-3 text-sm ${
                way === w.value ? "border-strand-700 bg-strand-50" : "border-ink-300 bg-white"
              }`}
            >
              <input
                type="radio"
                value={w.value}
                aria-labelledby={`${idBase}-${w.value}`}
                aria-describedby={`${idBase}-${w.value}-explain`}
                {...form.register("firstSignIn")}
                className="mt-0.5 h-5 w-5 shrink-0 accent-strand-700"
              />
              <span>
                <span id={`${idBase}-${w.value}`} className="block font-semibold text-ink-900">
                  {w.label}
                </span>
                <span id={`${idBase}-${w.value}-explain`} className="block text-ink-700">
                  {w.explain}
                </span>
              </span>
            </label>
          ))}
        </div>
      </fieldset>
      {way === "first_password" ? (
        <TextField
          label="First password"
          type="password"
          autoComplete="new-password"
          hint="At least 10 characters. Give it to the person in confidence; they replace it at their first sign-in."
          {...form.register("password")}
          error={form.formState.errors.password?.message}
        />
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={form.formState.isSubmitting}>
          {form.formState.isSubmitting ? "Creating…" : way === "first_password" ? "Create with this first password" : "Create and send the invitation"}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
