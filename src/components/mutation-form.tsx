import { useState, type ChangeEvent, type ComponentProps, type FormEvent, type ReactNode } from "react";
import type { FieldValues, UseFormReturn } from "react-hook-form";
import { useTranslation } from "react-i18next";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";

/** Today as a date field's value (YYYY-MM-DD) in the browser's, that is the plant's, own day. */
export const todayInput = () => {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, "0")}-${String(d.getDate()).padStart(2, "0")}`;
};

/** The server's refusal of a change, in its own words (nothing while there is none). */
export function MutationError({ mutation, title }: { mutation: { isError: boolean; error: Error | null }; title?: string }) {
  return mutation.isError && mutation.error ? (
    <Notice tone="error" title={title}>
      {mutation.error.message}
    </Notice>
  ) : null;
}

/**
 * A form's request awaited inside its submit (so the form's isSubmitting lasts as long): a refusal
 * comes back as undefined instead of being thrown, since the mutation's own error is what the form
 * shows (MutationError), and thrown it would also be an uncaught error in the console.
 */
export async function settled<T>(request: Promise<T>): Promise<{ value: T } | undefined> {
  try {
    return { value: await request };
  } catch {
    return undefined;
  }
}

/** A field's message under it, announced to screen readers (as TextField shows its own). */
export function FieldError({ message }: { message?: string }) {
  return message ? (
    <p role="alert" className="text-sm font-medium text-alarm-700">
      {message}
    </p>
  ) : null;
}

/** A labelled text area with, when given, a hint and the field's message under it. */
export function TextAreaField({
  id,
  label,
  hint,
  error,
  ...rest
}: ComponentProps<"textarea"> & { id: string; label: string; hint?: ReactNode; error?: string }) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <textarea id={id} aria-describedby={hint ? `${id}-hint` : undefined} {...rest} />
      {hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-600">
          {hint}
        </p>
      ) : null}
      <FieldError message={error} />
    </div>
  );
}

/**
 * A form that records something new (react-hook-form with its zod schema): the server's refusal on
 * top, the fields, then the button that sends it and Cancel. On a valid submit the values go through
 * `toInput` to the mutation; `onSaved` gets the server's answer.
 */
export function RecordForm<V extends FieldValues, I, D>({
  label,
  form,
  mutation,
  toInput,
  onSaved,
  onCancel,
  errorTitle,
  submitLabel,
  busyLabel,
  children,
}: {
  label: string;
  form: UseFormReturn<V>;
  mutation: { mutate: (input: I, options: { onSuccess: (answer: D) => void }) => void; isPending: boolean; isError: boolean; error: Error | null };
  toInput: (values: V) => I;
  onSaved: (answer: D) => void;
  onCancel: () => void;
  /** The refusal's heading (default: the notice's own). */
  errorTitle?: string;
  submitLabel: string;
  busyLabel: string;
  children: ReactNode;
}) {
  const { t } = useTranslation();
  return (
    <form noValidate aria-label={label} className="space-y-4" onSubmit={form.handleSubmit((v) => mutation.mutate(toInput(v), { onSuccess: onSaved }))}>
      <MutationError mutation={mutation} title={errorTitle} />
      {children}
      <div className="flex gap-2">
        <Button type="submit" disabled={mutation.isPending}>
          {mutation.isPending ? busyLabel : submitLabel}
        </Button>
        <Button variant="ghost" onClick={onCancel}>
          {t("form.cancel")}
        </Button>
      </div>
    </form>
  );
}

type Typed = ChangeEvent<HTMLInputElement | HTMLSelectElement | HTMLTextAreaElement>;

/**
 * The fields of a small form that adds a row (heats, a person, a hypothesis, slabs …) as typed, and
 * its submit: the values go through `toVariables` to the mutation (null: nothing to send), and once
 * the server took them the fields are empty again, but for those named in `keep`.
 */
export function useAddRow<F extends Record<string, string>, V>(
  mutation: { mutate: (variables: V, options: { onSuccess: () => void }) => void },
  empty: F,
  toVariables: (values: F) => V | null,
  keep: (keyof F)[] = [],
) {
  const [values, setValues] = useState(empty);
  const set = (key: keyof F, value: string) => setValues((v) => ({ ...v, [key]: value }));
  return {
    values,
    set,
    /** `value` and `onChange` for the field's input, select or text area. */
    bind: (key: keyof F) => ({ value: values[key], onChange: (e: Typed) => set(key, e.target.value) }),
    onSubmit: (e: FormEvent) => {
      e.preventDefault();
      const variables = toVariables(values);
      if (variables === null) return;
      mutation.mutate(variables, { onSuccess: () => setValues((v) => ({ ...empty, ...Object.fromEntries(keep.map((k) => [k, v[k]])) })) });
    },
  };
}
