import { forwardRef, useId, type InputHTMLAttributes, type ReactNode } from "react";

interface FieldProps extends InputHTMLAttributes<HTMLInputElement> {
  label: string;
  error?: string;
  hint?: ReactNode;
  large?: boolean;
}

/** A labelled input with its error under it; the error is announced to screen readers. */
export const TextField = forwardRef<HTMLInputElement, FieldProps>(function TextField({ label, error, hint, large, id, className = "", ...rest }, ref) {
  const autoId = useId();
  const inputId = id ?? autoId;
  const errorId = `${inputId}-error`;
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={inputId} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <input
        ref={ref}
        id={inputId}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? errorId : undefined}
        className={`w-full min-w-0 rounded-md border bg-white px-3 text-ink-900 placeholder:text-ink-400 ${
          large ? "min-h-14 text-lg" : "min-h-11"
        } ${error ? "border-alarm-700" : "border-ink-300"}`}
        {...rest}
      />
      {hint && !error ? <p className="text-xs text-ink-600">{hint}</p> : null}
      {error ? (
        <p id={errorId} role="alert" className="text-sm font-medium text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
});
