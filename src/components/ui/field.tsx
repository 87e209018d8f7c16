import { forwardRef, useCallback, useId, useLayoutEffect, useRef, type InputHTMLAttributes, type ReactNode, type Ref } from "react";
import { useTranslation } from "react-i18next";
import { inputNumber, inputNumberText, localeOf, parseDecimal } from "@/lib/format";

interface FieldProps extends InputHTMLAttributes<HTMLInputElement> {
  label: string;
  error?: string;
  hint?: ReactNode;
  large?: boolean;
}

/** The classes of a field's input, for a field drawn by another component (a date) beside TextFields. */
export const fieldInputClass = (error?: unknown, large?: boolean) =>
  `w-full min-w-0 rounded-md border bg-white px-3 text-ink-900 placeholder:text-ink-400 ${large ? "min-h-14 text-lg" : "min-h-11"} ${
    error ? "border-alarm-700" : "border-ink-300"
  }`;

/**
 * A decimal input a form fills itself (react-hook-form writes `el.value = 0.75` from its values, on
 * mount and on reset) shows the number in the language's style ("0,75" in German) while it is not
 * being typed in. Only the text on screen changes, with no event: the form keeps the number it has
 * (it reads the text again only when the person types or leaves the field, through parseDecimal).
 */
function useDecimalText(on: boolean) {
  const el = useRef<HTMLInputElement | null>(null);
  // The text this field last wrote, and the number it stands for: rewritten again when the language changes.
  const written = useRef<{ text: string; value: number } | null>(null);
  // Drawn again when the language changes, in the new one.
  const locale = localeOf(useTranslation().i18n.language);
  useLayoutEffect(() => {
    const input = el.current;
    if (!on || !input || input === document.activeElement) return;
    const text = input.value;
    const next = written.current && written.current.text === text ? inputNumber(written.current.value, locale) : inputNumberText(text, locale);
    if (next !== text) {
      input.value = next;
      written.current = { text: next, value: parseDecimal(next, locale) };
    }
  });
  return el;
}

function useBothRefs<T>(mine: { current: T | null }, theirs: Ref<T> | undefined) {
  return useCallback(
    (node: T | null) => {
      mine.current = node;
      if (typeof theirs === "function") theirs(node);
      else if (theirs) theirs.current = node;
    },
    [mine, theirs],
  );
}

/** A labelled input with its error under it; the error is announced to screen readers. */
export const TextField = forwardRef<HTMLInputElement, FieldProps>(function TextField({ label, error, hint, large, id, className = "", ...rest }, ref) {
  const autoId = useId();
  const inputId = id ?? autoId;
  const errorId = `${inputId}-error`;
  // A controlled input (value given) is written by React alone.
  const decimal = useDecimalText(rest.inputMode === "decimal" && rest.value === undefined);
  const inputRef = useBothRefs(decimal, ref);
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={inputId} className="text-sm font-semibold text-ink-800">
        {label}
      </label>
      <input
        ref={inputRef}
        id={inputId}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? errorId : undefined}
        className={fieldInputClass(error, large)}
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
