import { useQuery } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { windowKeys } from "../api/windows.queries";

type Props =
  /** The names of the rules flagging the slab, when the page has them already. */
  | { names: string[]; slabId?: never }
  /** The slab's plant id: the flags are fetched (GET /api/operating-windows/flags). */
  | { slabId: string; names?: never };

function Flags({ names }: { names: string[] }) {
  const { t } = useTranslation("slab");
  if (names.length === 0) return null;
  return (
    <div className="rounded-md border border-ember-600 bg-ember-50 px-3 py-2 text-sm text-ink-900" data-testid="window-flags" role="status">
      <div className="flex flex-wrap items-center gap-2">
        <span className="font-semibold">{t("windowFlags.castOutside")}</span>
        {names.map((n) => (
          <span key={n} className="inline-flex items-center gap-1 rounded border border-ember-600 bg-white px-2 py-0.5 font-medium">
            {n}
          </span>
        ))}
      </div>
      <p className="mt-1 text-xs text-ink-700">{t("windowFlags.caution")}</p>
    </div>
  );
}

/** The operating window rules flagging a slab; shows nothing when none does. */
export function WindowFlags(props: Props) {
  if (props.names) return <Flags names={props.names} />;
  return <FetchedFlags slabId={props.slabId} />;
}

function FetchedFlags({ slabId }: { slabId: string }) {
  const flags = useQuery(windowKeys.flags(slabId));
  const names = flags.data?.items.find((s) => s.slabId === slabId)?.rules.map((r) => r.name) ?? [];
  return <Flags names={names} />;
}
