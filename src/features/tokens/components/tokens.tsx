import { useRef, useState } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@/lib/form-resolver";
import { Trans, useTranslation } from "react-i18next";
import type { z } from "zod";
import { apiTokenCreateSchema, DEFAULT_TOKEN_SCOPES, TOKEN_SCOPES, type ApiToken, type TokenScope } from "@shared/api/tokens";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { useFormMessage } from "@/features/users/components/form-messages";
import { useTerms } from "@/i18n/terms";
import { friendlyErrors } from "@/lib/form-errors";
import { dateTime, formatLocale } from "@/lib/format";
import { useCreateToken, useRevokeToken } from "../api/tokens.queries";
import { settled } from "@/components/mutation-form";

type Created = ApiToken & { token: string };

/** Copies with the clipboard API where the browser allows it (secure contexts), else by selecting the text. */
async function copyText(text: string, fallbackInput: HTMLInputElement | null): Promise<boolean> {
  try {
    if (navigator.clipboard && window.isSecureContext) {
      await navigator.clipboard.writeText(text);
      return true;
    }
  } catch {
    // fall through to the selection
  }
  if (!fallbackInput) return false;
  fallbackInput.focus();
  fallbackInput.select();
  try {
    return document.execCommand("copy");
  } catch {
    return false;
  }
}

/** The ingest addresses a token may send to, as a list in the language shown ("a, b and c"), each as code. */
function IngestPaths({ scopes }: { scopes: string[] }) {
  const parts = new Intl.ListFormat(formatLocale(), { type: "conjunction" }).formatToParts(scopes.map((k) => `/api/ingest/${k}`));
  return (
    <>
      {parts.map((p, i) =>
        p.type === "element" ? (
          <code key={i} className="font-mono">
            {p.value}
          </code>
        ) : (
          <span key={i}>{p.value}</span>
        ),
      )}
    </>
  );
}

/** The new token, shown this once: it is stored hashed and cannot be shown again. */
export function TokenReveal({ created, onDone }: { created: Created; onDone: () => void }) {
  const { t } = useTranslation("admin");
  const [copied, setCopied] = useState<boolean | null>(null);
  const inputRef = useRef<HTMLInputElement>(null);
  return (
    <div className="space-y-3 rounded-md border-2 border-brass-400 bg-[#fbf3df] p-4" data-testid="token-reveal">
      <p className="text-sm font-semibold">{t("tokens.reveal.copyNow", { name: created.name })}</p>
      <div className="flex flex-wrap gap-2">
        <input
          ref={inputRef}
          readOnly
          value={created.token}
          aria-label={t("tokens.reveal.label")}
          onFocus={(e) => e.currentTarget.select()}
          className="min-h-12 min-w-0 flex-1 rounded-md border border-ink-300 bg-white px-3 font-mono text-sm"
          data-testid="token-value"
        />
        <Button onClick={async () => setCopied(await copyText(created.token, inputRef.current))}>{t("tokens.reveal.copy")}</Button>
      </div>
      {copied === true ? (
        <p role="status" className="text-sm font-semibold text-ok-700">
          {t("tokens.reveal.copied")}
        </p>
      ) : null}
      {copied === false ? (
        <p role="status" className="text-sm font-semibold text-ember-700">
          {t("tokens.reveal.notCopied")}
        </p>
      ) : null}
      <p className="text-xs text-ink-700">
        <Trans t={t} i18nKey="tokens.reveal.sends" components={{ 1: <code className="font-mono" />, 2: <IngestPaths scopes={created.scopes} /> }} />
      </p>
      <Button variant="secondary" onClick={onDone}>
        {t("tokens.reveal.stored")}
      </Button>
    </div>
  );
}

/** What a token may send: the level-2 kinds ticked by default, the rolling mill's products only when ticked. */
function ScopePicker({ value, onChange, error }: { value: TokenScope[]; onChange: (v: TokenScope[]) => void; error?: string }) {
  const { t } = useTranslation("admin");
  const { term } = useTerms();
  return (
    <fieldset className="space-y-2">
      <legend className="text-sm font-semibold">{t("tokens.form.mayInclude")}</legend>
      <div className="flex flex-wrap gap-2">
        {TOKEN_SCOPES.map((k) => {
          const checked = value.includes(k);
          return (
            <label
              key={k}
              className={`flex min-h-11 cursor-pointer items-center gap-2 rounded-md border px-3 text-sm ${checked ? "border-strand-700 bg-strand-50 font-semibold" : "border-ink-300 bg-white"}`}
            >
              <input
                type="checkbox"
                name="scopes"
                value={k}
                checked={checked}
                onChange={(e) => onChange(e.target.checked ? [...value, k] : value.filter((x) => x !== k))}
                className="h-5 w-5 accent-strand-700"
              />
              {term("tokenScopes", k)}
            </label>
          );
        })}
      </div>
      {error ? <p className="text-sm font-semibold text-alarm-700">{error}</p> : null}
    </fieldset>
  );
}

export function CreateTokenForm({ onCreated }: { onCreated: (t: Created) => void }) {
  const { t } = useTranslation("admin");
  const message = useFormMessage();
  const create = useCreateToken();
  const form = useForm<z.input<typeof apiTokenCreateSchema>>({
    resolver: zodResolver(apiTokenCreateSchema, friendlyErrors),
    defaultValues: { name: "", scopes: [...DEFAULT_TOKEN_SCOPES] },
  });
  return (
    <form
      noValidate
      aria-label={t("tokens.form.label")}
      className="space-y-3"
      onSubmit={form.handleSubmit(async (v) => {
        const made = await settled(create.mutateAsync({ name: v.name, scopes: v.scopes }));
        if (!made) return;
        form.reset();
        onCreated(made.value);
      })}
    >
      <TextField
        label={t("tokens.form.name")}
        placeholder={t("tokens.form.namePlaceholder")}
        {...form.register("name")}
        error={message(form.formState.errors.name?.message)}
      />
      <Controller
        control={form.control}
        name="scopes"
        render={({ field, fieldState }) => (
          <ScopePicker value={(field.value ?? []) as TokenScope[]} onChange={field.onChange} error={message(fieldState.error?.message)} />
        )}
      />
      {create.isError ? <Notice tone="error">{create.error.message}</Notice> : null}
      <Button type="submit" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? t("tokens.form.creating") : t("tokens.form.create")}
      </Button>
    </form>
  );
}

function TokenStatus({ token }: { token: ApiToken }) {
  const { t } = useTranslation("admin");
  return token.revokedAt ? (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ink-600">
      <span className="h-2.5 w-2.5 border-2 border-ink-600" aria-hidden /> {t("tokens.table.revoked", { when: dateTime(token.revokedAt) })}
    </span>
  ) : (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ok-700">
      <span className="h-2.5 w-2.5 rounded-full bg-ok-700" aria-hidden /> {t("tokens.table.active")}
    </span>
  );
}

function RevokeButton({ token }: { token: ApiToken }) {
  const { t } = useTranslation("admin");
  const [confirming, setConfirming] = useState(false);
  const revoke = useRevokeToken();
  if (token.revokedAt) return null;
  if (!confirming) {
    return (
      <Button variant="secondary" onClick={() => setConfirming(true)}>
        {t("tokens.table.revoke")}
      </Button>
    );
  }
  return (
    <div className="flex flex-wrap items-center justify-end gap-2">
      <span className="text-sm">{t("tokens.table.stopsAtOnce")}</span>
      <Button variant="danger" disabled={revoke.isPending} onClick={() => revoke.mutate(token.id, { onSuccess: () => setConfirming(false) })}>
        {t("tokens.table.yesRevoke", { name: token.name })}
      </Button>
      <Button variant="ghost" onClick={() => setConfirming(false)}>
        {t("tokens.table.keep")}
      </Button>
      {revoke.isError ? <span className="text-sm text-alarm-700">{revoke.error.message}</span> : null}
    </div>
  );
}

export function TokensTable({ tokens }: { tokens: ApiToken[] }) {
  const { t } = useTranslation("admin");
  const { term } = useTerms();
  if (tokens.length === 0) return <p className="text-sm text-ink-600">{t("tokens.table.none")}</p>;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="tokens-table">
        <thead>
          <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="py-2 pr-3">{t("tokens.table.name")}</th>
            <th className="py-2 pr-3">{t("tokens.table.startsWith")}</th>
            <th className="py-2 pr-3">{t("tokens.table.maySend")}</th>
            <th className="py-2 pr-3">{t("tokens.table.created")}</th>
            <th className="py-2 pr-3">{t("tokens.table.lastUsed")}</th>
            <th className="py-2 pr-3">{t("tokens.table.status")}</th>
            <th className="py-2" />
          </tr>
        </thead>
        <tbody>
          {tokens.map((token) => (
            <tr key={token.id} className="border-b border-ink-100" data-testid={`token-row-${token.name}`}>
              <td className="py-2 pr-3 font-semibold">{token.name}</td>
              <td className="py-2 pr-3 font-mono text-xs">{token.prefix}…</td>
              <td className="py-2 pr-3" data-testid="token-scopes">
                {token.scopes.length ? (
                  token.scopes.map((k) => term("tokenScopes", k).replace(/ \(.*\)$/, "")).join(", ")
                ) : (
                  <span className="text-ink-500">{t("tokens.table.nothing")}</span>
                )}
              </td>
              <td className="py-2 pr-3">
                {dateTime(token.createdAt)}
                {token.createdByName ? <div className="text-xs text-ink-600">{t("tokens.table.by", { name: token.createdByName })}</div> : null}
              </td>
              <td className="py-2 pr-3">{token.lastUsedAt ? dateTime(token.lastUsedAt) : <span className="text-ink-500">{t("tokens.table.never")}</span>}</td>
              <td className="py-2 pr-3">
                <TokenStatus token={token} />
              </td>
              <td className="py-2 text-right">
                <RevokeButton token={token} />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
