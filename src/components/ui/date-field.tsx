import { useId, useRef, useState, type FocusEvent, type KeyboardEvent, type ReactNode } from "react";
import { useTranslation } from "react-i18next";
import { inputDate, localeOf, parseInputDate } from "@/lib/format";

interface DateFieldProps {
  /** The day, YYYY-MM-DD; "" for none. */
  value: string;
  /**
   * Called with the day (YYYY-MM-DD) once the text is a complete, real day, or "" once it is cleared.
   * While the text is no day it can read, see `unreadable`.
   */
  onChange: (value: string) => void;
  onBlur?: () => void;
  /**
   * While the text is no day the field can read: "clear" (the default, for a form) reports "" at
   * once, so a form never goes on with the day it held before; "keep" (a filter) leaves the value as
   * it was, so a list does not jump while a date is being typed. Either way the field says so once it
   * is left (or Enter is pressed), and the text stays for the person to mend.
   */
  unreadable?: "clear" | "keep";
  /** Told whether the text reads as a day (or is empty): false once it has been left unreadable. */
  onReadable?: (readable: boolean) => void;
  /** The earliest and latest day the picker offers, YYYY-MM-DD. */
  min?: string;
  max?: string;
  /** The classes of the visible text input, the same as the inputs beside it. */
  inputClassName: string;
  /** With a label: the field draws it, tied to its text input, inside a wrapper with `className`. */
  label?: ReactNode;
  className?: string;
  labelClassName?: string;
  /** An error from the form (a rule of its own); the field's own "not a date" comes first. */
  error?: string;
  /** A word under the field while it has no error. */
  hint?: ReactNode;
  id?: string;
  name?: string;
  disabled?: boolean;
  "aria-label"?: string;
  "data-testid"?: string;
}

/** A calendar (16 px), drawn in the text's colour. */
function CalendarIcon() {
  return (
    <svg aria-hidden viewBox="0 0 16 16" width="16" height="16" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round">
      <rect x="2" y="3" width="12" height="11" rx="1.5" />
      <path d="M2 6.5h12M5.5 1.5v3M10.5 1.5v3" />
    </svg>
  );
}

/**
 * A date in the person's language, not the browser's: the text input shows and reads the day as the
 * language writes it ("04.05.2026" in German, "04/05/2026" in English) and reads ISO ("2026-05-04")
 * too; the button beside it opens the browser's own calendar. Its value in and out is YYYY-MM-DD,
 * so it stands in for `<input type="date">`.
 */
export function DateField({
  value,
  onChange,
  onBlur,
  unreadable = "clear",
  onReadable,
  min,
  max,
  inputClassName,
  label,
  className,
  labelClassName,
  error,
  hint,
  id,
  name,
  disabled,
  "aria-label": ariaLabel,
  "data-testid": testId,
}: DateFieldProps) {
  const { t, i18n } = useTranslation("common");
  const autoId = useId();
  const inputId = id ?? autoId;
  const errorId = `${inputId}-error`;
  const picker = useRef<HTMLInputElement>(null);
  const locale = localeOf(i18n.language);
  const [text, setText] = useState(() => inputDate(value, locale));
  const [wrong, setWrongState] = useState(false);
  const setWrong = (next: boolean) => {
    setWrongState(next);
    if (next !== wrong) onReadable?.(!next);
  };
  // The value this field last reported: the same value coming back is its own, any other is from
  // outside (a reset, the address, "clear filters") and the text follows it, even an unreadable text.
  const [sent, setSent] = useState(value);
  const tell = (next: string) => {
    setSent(next);
    if (next !== value) onChange(next);
  };
  // A new value from outside or a new language: the text follows.
  const [shown, setShown] = useState({ value, locale });
  if (shown.value !== value || shown.locale !== locale) {
    setShown({ value, locale });
    if (shown.locale !== locale || value !== sent) {
      setText(inputDate(value, locale));
      setSent(value);
      if (wrong) {
        setWrongState(false);
        // Told after this drawing: a parent's state is not set while a child is being drawn.
        queueMicrotask(() => onReadable?.(true));
      }
    }
  }

  const type = (next: string) => {
    setText(next);
    setWrong(false);
    if (next.trim() === "") return tell("");
    const day = parseInputDate(next, false, locale);
    if (day !== null) tell(day);
    else if (unreadable === "clear") tell("");
  };
  /** The text as it stands when the field is left or Enter is pressed (a two-digit year reads too); false when it is no day. */
  const read = (typed: string): boolean => {
    if (typed.trim() === "") {
      setText("");
      tell("");
      return true;
    }
    const day = parseInputDate(typed, true, locale);
    if (day === null) {
      setWrong(true);
      if (unreadable === "clear") tell("");
      return false;
    }
    setText(inputDate(day, locale));
    tell(day);
    return true;
  };
  const leave = (e: FocusEvent<HTMLInputElement>) => {
    read(e.target.value);
    onBlur?.();
  };
  // Enter sends the form the field is in: the text is read first, so the form sends what it shows,
  // and a text that is no day sends nothing (the field says why).
  const enter = (e: KeyboardEvent<HTMLInputElement>) => {
    if (e.key === "Enter" && !read(e.currentTarget.value)) e.preventDefault();
  };
  const openPicker = () => {
    const el = picker.current;
    if (!el) return;
    try {
      if (typeof el.showPicker === "function") {
        el.showPicker();
        return;
      }
    } catch {
      // No picker here (an old browser, or no click to open it from): the text input is left.
    }
    document.getElementById(inputId)?.focus();
  };

  const pattern = t("inputs.date.placeholder");
  const message = wrong ? t("inputs.date.invalid", { pattern }) : error;
  const control = (
    <div className="relative flex min-w-0">
      <input
        id={inputId}
        name={name}
        type="text"
        autoComplete="off"
        value={text}
        placeholder={pattern}
        disabled={disabled}
        aria-label={ariaLabel}
        aria-invalid={message ? true : undefined}
        aria-describedby={message ? errorId : undefined}
        data-testid={testId}
        onChange={(e) => type(e.target.value)}
        onBlur={leave}
        onKeyDown={enter}
        className={`${inputClassName} w-full min-w-0 pr-11 ${message ? "border-alarm-700!" : ""}`}
      />
      <button
        type="button"
        onClick={openPicker}
        disabled={disabled}
        aria-label={t("inputs.date.choose")}
        title={t("inputs.date.choose")}
        className="absolute inset-y-0 right-0 flex w-11 items-center justify-center rounded-r-md text-ink-600 hover:text-ink-900 focus-visible:outline focus-visible:outline-2 focus-visible:outline-strand-700 disabled:opacity-50"
      >
        <CalendarIcon />
      </button>
      {/* The browser's calendar, opened by the button; never seen or reached itself. */}
      <input
        ref={picker}
        type="date"
        tabIndex={-1}
        aria-hidden
        value={value}
        min={min}
        max={max}
        disabled={disabled}
        onChange={(e) => {
          setText(inputDate(e.target.value, locale));
          setWrong(false);
          tell(e.target.value);
        }}
        className="pointer-events-none absolute bottom-0 right-0 h-px w-px opacity-0"
      />
    </div>
  );
  const errorLine = message ? (
    <p id={errorId} role="alert" className="text-sm font-medium text-alarm-700">
      {message}
    </p>
  ) : hint ? (
    <p className="text-xs text-ink-600">{hint}</p>
  ) : null;
  if (label === undefined) {
    return (
      <>
        {control}
        {errorLine}
      </>
    );
  }
  return (
    <div className={className}>
      <label htmlFor={inputId} className={labelClassName}>
        {label}
      </label>
      {control}
      {errorLine}
    </div>
  );
}

/**
 * A "cast from … until …" pair of date fields (operating windows, risk training), the same look side
 * by side. Empty is no limit, so an unreadable date keeps the limit as it was (never "no limit"), and
 * `onReadable` tells whether both read, for a form that must not go on while one does not.
 */
export function DateRangeFields({
  fromLabel,
  toLabel,
  from,
  to,
  onFrom,
  onTo,
  onReadable,
}: {
  fromLabel: string;
  toLabel: string;
  from: string;
  to: string;
  onFrom: (value: string) => void;
  onTo: (value: string) => void;
  onReadable?: (readable: boolean) => void;
}) {
  const label = "flex flex-col gap-1 text-sm font-semibold text-ink-800";
  const input = "min-h-11 rounded-md border border-ink-300 px-3 font-normal";
  const [readable, setReadable] = useState({ from: true, to: true });
  const mark = (which: "from" | "to") => (ok: boolean) => {
    const next = { ...readable, [which]: ok };
    setReadable(next);
    onReadable?.(next.from && next.to);
  };
  return (
    <>
      <DateField
        label={fromLabel}
        className={label}
        value={from}
        max={to || undefined}
        onChange={onFrom}
        unreadable="keep"
        onReadable={mark("from")}
        inputClassName={input}
      />
      <DateField
        label={toLabel}
        className={label}
        value={to}
        min={from || undefined}
        onChange={onTo}
        unreadable="keep"
        onReadable={mark("to")}
        inputClassName={input}
      />
    </>
  );
}
