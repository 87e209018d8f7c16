import { useRef, useState } from "react";
import { Controller, useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import type { z } from "zod";
import { apiTokenCreateSchema, DEFAULT_TOKEN_SCOPES, TOKEN_SCOPE_LABELS, TOKEN_SCOPES, type ApiToken, type TokenScope } from "@shared/api/tokens";
import { Button } from "@/components/ui/button";
import { TextField } from "@/components/ui/field";
import { Notice } from "@/components/ui/notice";
import { friendlyErrors } from "@/lib/form-errors";
import { dateTime } from "@/lib/format";
import { useCreateToken, useRevokeToken } from "../api/tokens.queries";

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

/** The new token, shown this once: it is stored hashed and cannot be shown again. */
export function TokenReveal({ created, onDone }: { created: Created; onDone: () => void }) {
  const [copied, setCopied] = useState<boolean | null>(null);
  const inputRef = useRef<HTMLInputElement>(null);
  return (
    <div className="space-y-3 rounded-md border-2 border-brass-400 bg-[#fbf3df] p-4" data-testid="token-reveal">
      <p className="text-sm font-semibold">
        Token for “{created.name}” — copy it now. It is shown only this once; Strandsight keeps only a hash of it. If it is lost, revoke it and create a new
        one.
      </p>
      <div className="flex flex-wrap gap-2">
        <input
          ref={inputRef}
          readOnly
          value={created.token}
          aria-label="New API token"
          onFocus={(e) => e.currentTarget.select()}
          className="min-h-12 min-w-0 flex-1 rounded-md border border-ink-300 bg-white px-3 font-mono text-sm"
          data-testid="token-value"
        />
        <Button onClick={async () => setCopied(await copyText(created.token, inputRef.current))}>Copy</Button>
      </div>
      {copied === true ? (
        <p role="status" className="text-sm font-semibold text-ok-700">
          ✓ Copied to the clipboard.
        </p>
      ) : null}
      {copied === false ? (
        <p role="status" className="text-sm font-semibold text-ember-700">
          The browser did not allow copying: the token is selected, copy it with the keyboard.
        </p>
      ) : null}
      <p className="text-xs text-ink-700">
        The system sends it as <code className="font-mono">Authorization: Bearer …</code> to{" "}
        {created.scopes.map((k, i) => (
          <span key={k}>
            {i === 0 ? "" : i === created.scopes.length - 1 ? " and " : ", "}
            <code className="font-mono">/api/ingest/{k}</code>
          </span>
        ))}
        ; anything else it sends is refused.
      </p>
      <Button variant="secondary" onClick={onDone}>
        I have stored the token
      </Button>
    </div>
  );
}

/** What a token may send: the level-2 kinds ticked by default, the rolling mill's products only when ticked. */
function ScopePicker({ value, onChange, error }: { value: TokenScope[]; onChange: (v: TokenScope[]) => void; error?: string }) {
  return (
    <fieldset className="space-y-2">
      <legend className="text-sm font-semibold">It may send</legend>
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
              {TOKEN_SCOPE_LABELS[k]}
            </label>
          );
        })}
      </div>
      {error ? <p className="text-sm font-semibold text-alarm-700">{error}</p> : null}
    </fieldset>
  );
}

export function CreateTokenForm({ onCreated }: { onCreated: (t: Created) => void }) {
  const create = useCreateToken();
  const form = useForm<z.input<typeof apiTokenCreateSchema>>({
    resolver: zodResolver(apiTokenCreateSchema, friendlyErrors),
    defaultValues: { name: "", scopes: [...DEFAULT_TOKEN_SCOPES] },
  });
  return (
    <form
      noValidate
      aria-label="New API token"
      className="space-y-3"
      onSubmit={form.handleSubmit(async (v) => {
        const t = await create.mutateAsync({ name: v.name, scopes: v.scopes });
        form.reset();
        onCreated(t);
      })}
    >
      <TextField
        label="Name of the system that will use it"
        placeholder="e.g. Caster 2 level-2 feed"
        {...form.register("name")}
        error={form.formState.errors.name?.message}
      />
      <Controller
        control={form.control}
        name="scopes"
        render={({ field, fieldState }) => (
          <ScopePicker value={(field.value ?? []) as TokenScope[]} onChange={field.onChange} error={fieldState.error?.message} />
        )}
      />
      {create.isError ? <Notice tone="error">{create.error.message}</Notice> : null}
      <Button type="submit" disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? "Creating…" : "Create token"}
      </Button>
    </form>
  );
}

function TokenStatus({ token }: { token: ApiToken }) {
  return token.revokedAt ? (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ink-600">
      <span className="h-2.5 w-2.5 border-2 border-ink-600" aria-hidden /> Revoked {dateTime(token.revokedAt)}
    </span>
  ) : (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ok-700">
      <span className="h-2.5 w-2.5 rounded-full bg-ok-700" aria-hidden /> Active
    </span>
  );
}

function RevokeButton({ token }: { token: ApiToken }) {
  const [confirming, setConfirming] = useState(false);
  const revoke = useRevokeToken();
  if (token.revokedAt) return null;
  if (!confirming) {
    return (
      <Button variant="secondary" onClick={() => setConfirming(true)}>
        Revoke
      </Button>
    );
  }
  return (
    <div className="flex flex-wrap items-center justify-end gap-2">
      <span className="text-sm">The system using it stops at once.</span>
      <Button variant="danger" disabled={revoke.isPending} onClick={() => revoke.mutate(token.id, { onSuccess: () => setConfirming(false) })}>
        Yes, revoke {token.name}
      </Button>
      <Button variant="ghost" onClick={() => setConfirming(false)}>
        Keep it
      </Button>
      {revoke.isError ? <span className="text-sm text-alarm-700">{revoke.error.message}</span> : null}
    </div>
  );
}

export function TokensTable({ tokens }: { tokens: ApiToken[] }) {
  if (tokens.length === 0) return <p className="text-sm text-ink-600">No tokens yet.</p>;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="tokens-table">
        <thead>
          <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="py-2 pr-3">Name</th>
            <th className="py-2 pr-3">Starts with</th>
            <th className="py-2 pr-3">May send</th>
            <th className="py-2 pr-3">Created</th>
            <th className="py-2 pr-3">Last used</th>
            <th className="py-2 pr-3">Status</th>
            <th className="py-2" />
          </tr>
        </thead>
        <tbody>
          {tokens.map((t) => (
            <tr key={t.id} className="border-b border-ink-100" data-testid={`token-row-${t.name}`}>
              <td className="py-2 pr-3 font-semibold">{t.name}</td>
              <td className="py-2 pr-3 font-mono text-xs">{t.prefix}…</td>
              <td className="py-2 pr-3" data-testid="token-scopes">
                {t.scopes.length ? (
                  t.scopes.map((k) => TOKEN_SCOPE_LABELS[k].replace(/ \(.*\)$/, "")).join(", ")
                ) : (
                  <span className="text-ink-500">nothing</span>
                )}
              </td>
              <td className="py-2 pr-3">
                {dateTime(t.createdAt)}
                {t.createdByName ? <div className="text-xs text-ink-600">by {t.createdByName}</div> : null}
              </td>
              <td className="py-2 pr-3">{t.lastUsedAt ? dateTime(t.lastUsedAt) : <span className="text-ink-500">never</span>}</td>
              <td className="py-2 pr-3">
                <TokenStatus token={t} />
              </td>
              <td className="py-2 text-right">
                <RevokeButton token={t} />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
