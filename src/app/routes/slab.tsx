import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { can } from "@shared/roles";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { SlabMap } from "@/features/slabs/components/slab-map";
import { SlabConditionsTable, SlabDefects, SlabDerived, SlabFacts } from "@/features/slabs/components/slab-sections";
import { plural } from "@/lib/format";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

// Kept light on purpose: the inspector opens this on a tablet in the yard; no chart library here.
export function makeLoader(qc: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await requireCapability(qc, "plant.read");
    await qc.ensureQueryData(slabKeys.detail(params.slabId ?? ""));
    return null;
  };
}

export function Component() {
  const { slabId = "" } = useParams();
  const slab = useQuery(slabKeys.detail(slabId));
  const me = useQuery(authKeys.me());
  if (slab.isPending) return <Spinner label="Loading the slab" />;
  if (slab.isError) return <Notice tone="error">{slab.error.message}</Notice>;
  const s = slab.data;
  const inYard = me.data ? can(me.data.roles, "defects.log") : false;
  // Rejected entries stay visible, marked, but do not count as defects of the slab.
  const rejected = s.defects.filter((d) => d.reviewStatus === "rejected").length;
  const counted = s.defects.length - rejected;
  return (
    <div className="space-y-5">
      <PageHeader
        title={`Slab ${s.slabId}`}
        subtitle={`Heat ${s.heatNo} · ${s.gradeCode} · strand ${s.strandNo}, piece ${s.pieceNo} · ${plural(counted, "defect")} on record${
          rejected ? ` (and ${plural(rejected, "rejected entry", "rejected entries")})` : ""
        }`}
        actions={
          inYard ? (
            <Link to="/yard" className="flex min-h-12 items-center rounded-md border border-ink-300 bg-white px-4 text-base font-semibold text-ink-900 hover:bg-ink-50">
              ← Find another slab
            </Link>
          ) : null
        }
      />
      <Card>
        <SlabFacts slab={s} />
      </Card>
      <Card title={`Defects (${s.defects.length})`}>
        <div className="space-y-4">
          <SlabMap slab={s} />
          <SlabDefects defects={s.defects} />
        </div>
      </Card>
      <Card title="Casting conditions of this slab">
        <SlabConditionsTable slab={s} />
      </Card>
      <Card title="Derived values at the slab's conditions">
        <SlabDerived conditions={s.conditions} />
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
