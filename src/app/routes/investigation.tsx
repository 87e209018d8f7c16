import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { useTranslation } from "react-i18next";
import { can } from "@shared/roles";
import { PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { causeKeys } from "@/features/causes/api/causes.queries";
import { investigationKeys } from "@/features/investigations/api/investigations.queries";
import {
  ActionsCard,
  InvestigationAttachmentsCard,
  ClosureCard,
  HistoryCard,
  HypothesesCard,
  InvestigationSummaryCard,
  ParticipantsCard,
  Section,
  SubjectsCard,
  type TagOption,
} from "@/features/investigations/components/investigation-detail";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

const idOf = (raw: string | undefined) => Number(raw);

export function makeLoader(qc: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    const me = await requireCapability(qc, "investigations.read");
    if (can(me.roles, "investigations.manage")) {
      void qc.prefetchQuery(investigationKeys.people());
      void qc.prefetchQuery(causeKeys.taxonomy(false));
    }
    await qc.ensureQueryData(investigationKeys.detail(idOf(params.id)));
    return null;
  };
}

export function Component() {
  const { t } = useTranslation("process");
  const { id } = useParams();
  const me = useQuery(authKeys.me());
  const canManage = me.data ? can(me.data.roles, "investigations.manage") : false;
  const inv = useQuery(investigationKeys.detail(idOf(id)));
  const people = useQuery({ ...investigationKeys.people(), enabled: canManage });
  const taxonomy = useQuery({ ...causeKeys.taxonomy(false), enabled: canManage });
  if (inv.isPending) return <Spinner label={t("investigations.detail.loading")} />;
  if (inv.isError) return <Notice tone="error">{inv.error.message}</Notice>;
  const i = inv.data;
  const persons = people.data?.people ?? [];
  // Cause tags come from the causes feature; the investigation's pieces take them as plain options
  // (null while they are on their way: the fields say so; none if they could not be had).
  const tags: TagOption[] | null =
    canManage && taxonomy.isPending
      ? null
      : (taxonomy.data?.groups ?? []).flatMap((g) => g.tags.filter((x) => !x.retired).map((x) => ({ code: x.code, name: x.name, group: g.name })));
  const editable = canManage && i.status !== "closed";
  return (
    <div className="space-y-5">
      <div>
        <Link to="/investigations" className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {t("home.allInvestigations")}
        </Link>
      </div>
      <PageHeader
        title={i.title}
        subtitle={t(canManage ? "investigations.detail.subtitle" : "investigations.detail.subtitleReadOnly", {
          ref: i.ref,
          owner: i.owner?.name ?? t("investigations.detail.notSet"),
        })}
      />
      <InvestigationSummaryCard inv={i} canManage={canManage} people={persons} />
      <SubjectsCard inv={i} canManage={canManage} />
      <Section>
        <HypothesesCard inv={i} canManage={canManage} tags={tags} />
        <ActionsCard inv={i} canManage={canManage} people={persons} />
      </Section>
      <Section>
        <InvestigationAttachmentsCard inv={i} canManage={canManage} />
        <ParticipantsCard inv={i} canManage={canManage} people={persons} />
      </Section>
      {editable ? <ClosureCard inv={i} tags={tags} /> : null}
      <HistoryCard inv={i} />
    </div>
  );
}

export const ErrorBoundary = RouteError;
