import { Fragment, useMemo, useState } from "react";
import { useTranslation } from "react-i18next";
import { createColumnHelper, flexRender, getCoreRowModel, getSortedRowModel, useReactTable, type SortingState } from "@tanstack/react-table";
import type { Role } from "@shared/roles";
import type { AdminUser } from "@shared/api/users";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { dateTime } from "@/lib/format";
import { useUnlockUser, useUpdateUser } from "../api/users.queries";
import { RolePicker } from "./role-picker";

const col = createColumnHelper<AdminUser>();

function StatusMark({ active }: { active: boolean }) {
  const { t } = useTranslation("admin");
  // Shape and word, not colour alone: a filled circle for active, a hollow square for deactivated.
  return active ? (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ok-700">
      <span className="h-2.5 w-2.5 rounded-full bg-ok-700" aria-hidden /> {t("users.table.active")}
    </span>
  ) : (
    <span className="inline-flex items-center gap-1.5 text-sm font-medium text-ink-600">
      <span className="h-2.5 w-2.5 border-2 border-ink-600" aria-hidden /> {t("users.table.deactivated")}
    </span>
  );
}

/** A padlock and words: sign-in is refused from these addresses after repeated wrong passwords. */
function LockMark({ user }: { user: AdminUser }) {
  const { t } = useTranslation("admin");
  if (user.lockedFrom.length === 0) return null;
  const last = user.lockedFrom.reduce((a, b) => (a.until > b.until ? a : b));
  return (
    <span className="mt-1 inline-flex items-start gap-1.5 text-sm font-medium text-ember-700" data-testid={`locked-${user.email}`}>
      <svg viewBox="0 0 16 16" className="mt-0.5 h-4 w-4 shrink-0" aria-hidden>
        <rect x="3" y="7" width="10" height="7" rx="1" fill="currentColor" />
        <path d="M5 7V5a3 3 0 0 1 6 0v2" fill="none" stroke="currentColor" strokeWidth="1.8" />
      </svg>
      <span>{t("users.table.locked", { addresses: user.lockedFrom.map((l) => l.address).join(", "), until: dateTime(last.until) })}</span>
    </span>
  );
}

/** Until the person has a password of their own: which way in is still open to them, in words. */
function FirstSignInMark({ user }: { user: AdminUser }) {
  const { t } = useTranslation("admin");
  if (!user.firstSignIn) return null;
  return (
    <span className="mt-1 inline-flex items-start gap-1.5 text-sm font-medium text-ink-700" data-testid={`first-sign-in-${user.email}`}>
      <svg viewBox="0 0 16 16" className="mt-0.5 h-4 w-4 shrink-0" aria-hidden>
        {user.firstSignIn === "invitation" ? (
          // An envelope: the invitation is out.
          <path d="M2 4h12v8H2zM2 4l6 5 6-5" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
        ) : (
          // A key: a first password was handed over.
          <path d="M6 8a3 3 0 1 1 0 .01M9 8h5M12 8v2.5M14 8v2" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
        )}
      </svg>
      <span>{user.firstSignIn === "invitation" ? t("users.table.invited") : t("users.table.firstPassword")}</span>
    </span>
  );
}

function RolesEditor({ user, onClose }: { user: AdminUser; onClose: () => void }) {
  const { t } = useTranslation(["admin", "schema"]);
  const [roles, setRoles] = useState<Role[]>(user.roles);
  const update = useUpdateUser();
  return (
    <div className="space-y-3 rounded-md border border-ink-200 bg-ink-50 p-3">
      {update.error ? <Notice tone="error">{update.error.message}</Notice> : null}
      <RolePicker name={`roles-${user.id}`} value={roles} onChange={setRoles} />
      {/* Why "Save roles" waits, rather than a greyed button alone. */}
      {roles.length === 0 ? (
        <p role="status" className="text-sm font-medium text-ink-800">
          {t("schema:A user keeps at least one role.")}
        </p>
      ) : null}
      <div className="flex gap-2">
        <Button disabled={roles.length === 0 || update.isPending} onClick={() => update.mutate({ id: user.id, roles }, { onSuccess: onClose })}>
          {t("users.table.saveRoles")}
        </Button>
        <Button variant="ghost" onClick={onClose}>
          {t("users.table.cancel")}
        </Button>
      </div>
    </div>
  );
}

export function UsersTable({ users, currentUserId }: { users: AdminUser[]; currentUserId: string }) {
  const { t } = useTranslation("admin");
  const [sorting, setSorting] = useState<SortingState>([{ id: "name", desc: false }]);
  const [editing, setEditing] = useState<string | null>(null);
  // Deactivating signs the person out at once: asked once more, beside the button (reactivating is not).
  const [confirming, setConfirming] = useState<string | null>(null);
  const update = useUpdateUser();
  const unlock = useUnlockUser();

  const columns = useMemo(
    () => [
      col.accessor("name", { header: t("users.table.name") }),
      col.accessor("email", { header: t("users.table.email") }),
      col.accessor((u) => u.roles.map((r) => t(`common:roles.${r}`)).join(", "), {
        id: "roles",
        header: t("users.table.roles"),
        cell: (c) => (
          <div className="flex flex-wrap gap-1">
            {c.row.original.roles.map((r) => (
              <span key={r} className="rounded bg-strand-50 px-2 py-0.5 text-xs font-semibold text-strand-800">
                {t(`common:roles.${r}`)}
              </span>
            ))}
          </div>
        ),
      }),
      col.accessor("active", {
        header: t("users.table.status"),
        cell: (c) => (
          <div className="flex flex-col">
            <StatusMark active={c.getValue()} />
            <FirstSignInMark user={c.row.original} />
            <LockMark user={c.row.original} />
          </div>
        ),
      }),
      col.display({
        id: "actions",
        // Named for screen readers (an empty header leaves the column unnamed); on screen the buttons say it.
        header: () => <span className="sr-only">{t("users.table.actions")}</span>,
        cell: (c) => {
          const u = c.row.original;
          return (
            <div className="flex justify-end gap-2">
              {u.lockedFrom.length > 0 ? (
                <Button
                  variant="secondary"
                  disabled={unlock.isPending}
                  onClick={() => unlock.mutate(u.id)}
                  aria-label={t("users.table.unlockOf", { name: u.name })}
                >
                  {t("users.table.unlock")}
                </Button>
              ) : null}
              <Button
                variant="secondary"
                onClick={() => setEditing(editing === u.id ? null : u.id)}
                aria-label={t("users.table.changeRolesOf", { name: u.name })}
              >
                {t("users.table.rolesButton")}
              </Button>
              {u.id === currentUserId ? null : u.active && confirming === u.id ? (
                <>
                  <Button
                    variant="danger"
                    disabled={update.isPending}
                    onClick={() => update.mutate({ id: u.id, active: false }, { onSuccess: () => setConfirming(null) })}
                    aria-label={t("users.table.confirmDeactivateNamed", { name: u.name })}
                  >
                    {t("users.table.confirmDeactivate")}
                  </Button>
                  <Button variant="ghost" onClick={() => setConfirming(null)}>
                    {t("users.table.keepActive")}
                  </Button>
                </>
              ) : (
                <Button
                  variant={u.active ? "ghost" : "secondary"}
                  disabled={update.isPending}
                  onClick={() => (u.active ? setConfirming(u.id) : update.mutate({ id: u.id, active: true }))}
                  aria-label={u.active ? t("users.table.deactivateNamed", { name: u.name }) : t("users.table.reactivateNamed", { name: u.name })}
                >
                  {u.active ? t("users.table.deactivate") : t("users.table.reactivate")}
                </Button>
              )}
            </div>
          );
        },
      }),
    ],
    [editing, confirming, currentUserId, update, unlock, t],
  );

  const table = useReactTable({
    data: users,
    columns,
    state: { sorting },
    onSortingChange: setSorting,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });

  return (
    <div className="space-y-2">
      {update.error ? <Notice tone="error">{update.error.message}</Notice> : null}
      {unlock.error ? <Notice tone="error">{unlock.error.message}</Notice> : null}
      {unlock.data ? <Notice tone="ok">{t("users.table.unlocked", { name: unlock.data.name })}</Notice> : null}
      <div className="overflow-x-auto">
        <table className="w-full text-sm">
          <thead>
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id} className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
                {hg.headers.map((h) => (
                  <th key={h.id} className="py-2 pr-3">
                    {h.column.getCanSort() ? (
                      <button className="min-h-8 uppercase" onClick={h.column.getToggleSortingHandler()}>
                        {flexRender(h.column.columnDef.header, h.getContext())}
                        {{ asc: " ▲", desc: " ▼" }[h.column.getIsSorted() as string] ?? ""}
                      </button>
                    ) : (
                      flexRender(h.column.columnDef.header, h.getContext())
                    )}
                  </th>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <Fragment key={row.id}>
                <tr className="border-b border-ink-100" data-testid={`user-row-${row.original.email}`}>
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className="py-2 pr-3 align-middle">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
                {editing === row.original.id ? (
                  <tr>
                    <td colSpan={columns.length} className="py-2">
                      <RolesEditor user={row.original} onClose={() => setEditing(null)} />
                    </td>
                  </tr>
                ) : null}
              </Fragment>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
