import { useEffect, useId, useRef, useState } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { useTranslation } from "react-i18next";
import { createUserSchema, type CreatedUser, type CreateUserInput, type FirstSignIn } from "@shared/api/users";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { ApiError } from "@/lib/api-client";
import { useCreateUser } from "../api/users.queries";
import { useFormMessage } from "./form-messages";
import { RolePicker } from "./role-picker";

/** The two ways in, offered in this order (one per account); their words are under `users.form.ways`. */
const WAYS: FirstSignIn[] = ["invitation", "first_password"];

/** What the administrator is told once the account exists: whom it is for and how they get in. */
function Confirmation({ created, onAnother, onDone }: { created: CreatedUser; onAnother: () => void; onDone: () => void }) {
  const { t } = useTranslation("admin");
  const ref = useRef<HTMLDivElement>(null);
  // The form is replaced by this: keyboard and screen-reader users land on the news, not on nothing.
  useEffect(() => ref.current?.focus(), []);
  const who = { name: created.name, email: created.email };
  return (
    <div ref={ref} tabIndex={-1} className="space-y-4 outline-none" data-testid="user-created" data-way={created.firstSignIn ?? "own"}>
      {created.firstSignIn === "invitation" && created.invitationQueued === false ? (
        <Notice tone="caution" title={t("users.created.notSentTitle")}>
          {t("users.created.notSent", who)}
        </Notice>
      ) : created.firstSignIn === "invitation" ? (
        <Notice tone="ok">{t("users.created.invited", who)}</Notice>
      ) : (
        <Notice tone="ok">{t("users.created.firstPassword", who)}</Notice>
      )}
      <div className="flex flex-wrap gap-2">
        <Button onClick={onAnother}>{t("users.created.another")}</Button>
        <Button variant="secondary" onClick={onDone}>
          {t("users.created.done")}
        </Button>
      </div>
    </div>
  );
}

export function CreateUserForm({ onDone }: { onDone: () => void }) {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
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
    <form onSubmit={submit} noValidate className="space-y-4" aria-label={t("users.form.label")}>
      {serverError ? <Notice tone="error">{serverError}</Notice> : null}
      <div className="grid gap-4 md:grid-cols-2">
        <TextField label={t("users.form.name")} {...form.register("name")} error={message(form.formState.errors.name?.message)} />
        <TextField
          label={t("users.form.email")}
          type="email"
          autoComplete="off"
          {...form.register("email")}
          error={message(form.formState.errors.email?.message)}
        />
      </div>
      <div>
        <div className="mb-1 text-sm font-semibold text-ink-800">{t("users.form.roles")}</div>
        <Controller
          control={form.control}
          name="roles"
          render={({ field }) => <RolePicker name="new-user-roles" value={field.value} onChange={field.onChange} />}
        />
        {form.formState.errors.roles ? (
          <p role="alert" className="mt-1 text-sm font-medium text-alarm-700">
            {message(form.formState.errors.roles.message)}
          </p>
        ) : null}
      </div>
      <fieldset className="space-y-2">
        <legend className="mb-1 text-sm font-semibold text-ink-800">{t("users.form.howTheyGetIn")}</legend>
        <div className="grid gap-2 md:grid-cols-2">
          {WAYS.map((w) => (
            // The whole card chooses; the radio is named by its title and described by the explanation.
            <label
              key={w}
              className={`flex min-h-12 cursor-pointer gap-3 rounded-md border p-3 text-sm ${
                way === w ? "border-strand-700 bg-strand-50" : "border-ink-300 bg-white"
              }`}
            >
              <input
                type="radio"
                value={w}
                aria-labelledby={`${idBase}-${w}`}
                aria-describedby={`${idBase}-${w}-explain`}
                {...form.register("firstSignIn")}
                className="mt-0.5 h-5 w-5 shrink-0 accent-strand-700"
              />
              <span>
                <span id={`${idBase}-${w}`} className="block font-semibold text-ink-900">
                  {t(`users.form.ways.${w}.label`)}
                </span>
                <span id={`${idBase}-${w}-explain`} className="block text-ink-700">
                  {t(`users.form.ways.${w}.explain`)}
                </span>
              </span>
            </label>
          ))}
        </div>
      </fieldset>
      {way === "first_password" ? (
        <TextField
          label={t("users.form.firstPassword")}
          type="password"
          autoComplete="new-password"
          hint={t("users.form.firstPasswordHint")}
          {...form.register("password")}
          error={message(form.formState.errors.password?.message)}
        />
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" disabled={form.formState.isSubmitting}>
          {form.formState.isSubmitting
            ? t("users.form.creating")
            : way === "first_password"
              ? t("users.form.createWithPassword")
              : t("users.form.createAndInvite")}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          {t("users.form.cancel")}
        </Button>
      </div>
    </form>
  );
}
