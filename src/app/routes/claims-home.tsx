import { useState } from "react";
import type { QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import type { SlabHit } from "@shared/api/plant";
import { Card, PageHeader } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { SlabFinder } from "@/features/plant/components/slab-finder";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "claims.manage");
    return null;
  };
}

export function Component() {
  const [slab, setSlab] = useState<SlabHit | null>(null);
  return (
    <div className="space-y-5">
      <PageHeader title="Claims" subtitle="Look up the slab and heat behind a complaint." />
      <Notice tone="info" title="Procedure">
        Dispositions and claims follow the plant's quality procedures and the customer's specification.
      </Notice>
      <Card title="Find a slab or heat">
        <SlabFinder onPick={setSlab} autoFocus={false} />
      </Card>
      {slab ? (
        <Card title={`Slab ${slab.slabId}`}>
          <p className="text-sm">
            Heat <span className="font-semibold">{slab.heatNo}</span>, strand {slab.strandNo}, grade {slab.gradeCode}, cast{" "}
            {slab.castAt ? new Date(slab.castAt).toLocaleString("en-GB") : "—"}; {slab.defectCount} defect(s) on record.
          </p>
          <div className="mt-3 flex flex-wrap gap-3">
            <Link to={`/slabs/${encodeURIComponent(slab.slabId)}`} className="flex min-h-11 items-center rounded-md bg-strand-700 px-4 text-sm font-semibold text-white hover:bg-strand-800">
              Open slab {slab.slabId}
            </Link>
            <Link
              to={`/heats/${encodeURIComponent(slab.heatNo)}`}
              className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
            >
              Open heat {slab.heatNo}
            </Link>
          </div>
        </Card>
      ) : null}
    </div>
  );
}

export const ErrorBoundary = RouteError;
