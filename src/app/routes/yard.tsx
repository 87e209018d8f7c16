import { useState } from "react";
import type { QueryClient } from "@tanstack/react-query";
import { Link } from "react-router";
import type { SlabHit } from "@shared/api/plant";
import { Card, PageHeader } from "@/components/ui/card";
import { HotYardCaution } from "@/features/plant/components/hot-yard-caution";
import { SlabFinder } from "@/features/plant/components/slab-finder";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async () => {
    await requireCapability(qc, "defects.log");
    return null;
  };
}

export function Component() {
  const [slab, setSlab] = useState<SlabHit | null>(null);
  return (
    <div className="mx-auto max-w-3xl space-y-5">
      <PageHeader title="Find a slab" subtitle="Type the id or scan the slab's label." />
      <HotYardCaution />
      <Card>
        <SlabFinder onPick={setSlab} />
      </Card>
      {slab ? (
        <Card title={`Slab ${slab.slabId}`}>
          <dl className="grid grid-cols-2 gap-x-6 gap-y-2 text-base md:grid-cols-4">
            <div>
              <dt className="text-xs font-semibold uppercase text-ink-600">Heat</dt>
              <dd className="font-semibold">{slab.heatNo}</dd>
            </div>
            <div>
              <dt className="text-xs font-semibold uppercase text-ink-600">Strand</dt>
              <dd className="font-semibold">{slab.strandNo}</dd>
            </div>
            <div>
              <dt className="text-xs font-semibold uppercase text-ink-600">Grade</dt>
              <dd className="font-semibold">{slab.gradeCode}</dd>
            </div>
            <div>
              <dt className="text-xs font-semibold uppercase text-ink-600">Defects on record</dt>
              <dd className="font-semibold">{slab.defectCount}</dd>
            </div>
          </dl>
          <Link
            to={`/slabs/${encodeURIComponent(slab.slabId)}`}
            className="mt-4 flex min-h-14 items-center justify-center rounded-md bg-strand-700 px-6 text-base font-semibold text-white hover:bg-strand-800"
          >
            Open slab {slab.slabId}: conditions and defects
          </Link>
        </Card>
      ) : null}
    </div>
  );
}

export const ErrorBoundary = RouteError;
