import { useState, type ReactNode } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Trans, useTranslation } from "react-i18next";
import { Link, useParams, useSearchParams, type LoaderFunctionArgs, type ShouldRevalidateFunction } from "react-router";
import { CUSTOMER_DEFAULT_SECTIONS, CUSTOMER_SECTIONS, type CustomerSection, type HeatHistory, type HistorySection } from "@shared/api/claims";
import { Button } from "@/components/ui/button";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { historyKeys, type HistoryEditionChoice } from "@/features/claims/api/claims.queries";
import { EditionChooser, type EditionValue } from "@/features/claims/components/edition-chooser";
import { HistoryWorkbookButton } from "@/features/claims/components/history-actions";
import {
  AuditTable,
  CausesTable,
  ChemistryTable,
  ConditionsTable,
  DefectsList,
  HistoryFacts,
  PrintUrl,
  RelatedRecords,
  SamplesLine,
  SlabConditionsTable,
  SlabsTable,
} from "@/features/claims/components/history-sections";
import { useTerms } from "@/i18n/terms";
import { count, date, dateTime, day, withUnit } from "@/lib/format";
import { causeChips } from "../cause-chips";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

/** The edition asked for in the address: `?edition=customer&sections=…&claim=…`; the internal one otherwise. */
function editionFrom(params: URLSearchParams): HistoryEditionChoice {
  const claim = Number(params.get("claim")) || undefined;
  if (params.get("edition") !== "customer") return claim ? { claim } : {};
  const raw = params.get("sections");
  const sections = raw === null ? CUSTOMER_DEFAULT_SECTIONS : CUSTOMER_SECTIONS.filter((x) => raw.split(",").includes(x));
  return { edition: "customer", sections, ...(claim ? { claim } : {}) };
}

export function makeLoader(qc: QueryClient) {
  return async ({ params, request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "history.export");
    await qc.ensureQueryData(historyKeys.heat(params.heatNo ?? "", editionFrom(new URL(request.url).searchParams)));
    return null;
  };
}

/**
 * Another edition or choice of parts is asked by the screen itself (its query shows the last answer
 * while the next comes), so the address changing its query does not hold the screen on the loader.
 */
export const shouldRevalidate: ShouldRevalidateFunction = ({ currentUrl, nextUrl, defaultShouldRevalidate }) =>
  currentUrl.pathname === nextUrl.pathname ? false : defaultShouldRevalidate;

/** One part of the paper: a heading and its records; on paper each part starts clear of the last. */
function Part({ n, title, children, pageBreak = false }: { n: number; title: string; children: ReactNode; pageBreak?: boolean }) {
  return (
    <section
      className={`rounded-lg border border-ink-200 bg-white p-4 print:rounded-none print:border-0 print:p-0 ${pageBreak ? "print:break-before-page" : ""}`}
      data-testid="history-part"
    >
      <h2 className="mb-3 border-b-2 border-ink-800 pb-1 text-base font-bold text-ink-900 print:break-after-avoid">
        {n}. {title}
      </h2>
      {children}
    </section>
  );
}

/** The claim's cover page: on paper a page of its own. */
function Cover({ h }: { h: HeatHistory }) {
  const { t } = useTranslation("heats");
  const { term } = useTerms();
  const c = h.edition.cover!;
  // [the field's name in the page (data-field, the same in every language), its label, its value]
  const rows: [string, string, ReactNode][] = [
    ["Claim", t("history.cover.claim"), c.claimNo],
    ["Customer", t("history.cover.customer"), c.customer],
    ["Claim received", t("history.cover.received"), day(c.receivedOn)],
    ["Defect complained of", t("history.cover.defect"), c.defectComplained],
    ...(c.quantityT !== null ? ([["Quantity claimed", t("history.cover.quantity"), withUnit(c.quantityT, "t", 2)]] as [string, string, ReactNode][]) : []),
    ["Coils and plates of this heat", t("history.cover.products"), c.products.join(", ") || "—"],
    ...(c.otherProducts.length
      ? ([
          [
            "Other coils and plates of the claim",
            t("history.cover.otherProducts"),
            t("history.cover.otherProductsValue", { products: c.otherProducts.join(", ") }),
          ],
        ] as [string, string, ReactNode][])
      : []),
    ["Slabs of this heat in the claim", t("history.cover.slabs"), c.slabs.join(", ")],
    [
      "Heat cast",
      t("history.cover.cast"),
      h.heat.castEnd ? t("history.cover.castRange", { start: dateTime(h.heat.castStart), end: dateTime(h.heat.castEnd) }) : dateTime(h.heat.castStart),
    ],
    ["Contents", t("history.cover.contents"), h.edition.sections.map((x) => term("historySections", x)).join(", ")],
    [
      "Prepared",
      t("history.cover.prepared"),
      c.preparedBy ? t("history.cover.preparedBy", { when: date(h.generatedAt), who: c.preparedBy }) : date(h.generatedAt),
    ],
  ];
  return (
    <section
      className="rounded-lg border-2 border-ink-800 bg-white p-5 print:break-after-page print:rounded-none print:border-0 print:p-0"
      data-testid="history-cover"
    >
      <div className="text-xs font-semibold uppercase tracking-widest text-ink-600">
        {h.edition.kind === "customer" ? t("history.cover.kickerCustomer") : t("history.cover.kickerInternal")}
      </div>
      <h2 className="mt-1 text-3xl font-bold tracking-tight text-ink-900">{t("history.cover.title", { claim: c.claimNo, heat: h.heat.heatNo })}</h2>
      <dl className="mt-4 grid gap-x-6 gap-y-2 sm:grid-cols-[auto_1fr]">
        {rows.map(([k, label, v]) => (
          <div key={k} className="contents">
            <dt className="text-sm font-semibold text-ink-600">{label}</dt>
            <dd className="text-base text-ink-900" data-field={k}>
              {v}
            </dd>
          </div>
        ))}
      </dl>
    </section>
  );
}

/**
 * The heat history laid out for paper: the same records, in the same order, as the workbook. The
 * internal edition holds everything; the customer edition, with the claim's cover, the parts the
 * officer ticks here (the choice stays in the address, so the workbook and a reload match it).
 */
export function Component() {
  const { t } = useTranslation("heats");
  const { heatNo = "" } = useParams();
  const [params, setParams] = useSearchParams();
  const choice = editionFrom(params);
  const [picked, setPicked] = useState<EditionValue>({ edition: choice.edition ?? "internal", sections: choice.sections ?? CUSTOMER_DEFAULT_SECTIONS });
  const hist = useQuery({ ...historyKeys.heat(heatNo, choice), placeholderData: (previous) => previous });
  if (hist.isPending) return <Spinner label={t("history.loading")} />;
  if (hist.isError) return <Notice tone="error">{hist.error.message}</Notice>;
  const h = hist.data;
  const customer = h.edition.kind === "customer";
  const on = (x: HistorySection) => h.edition.sections.includes(x);
  const heatPath = `/heats/${encodeURIComponent(h.heat.heatNo)}`;
  const setChoice = (edition: "internal" | "customer", sections: CustomerSection[]) =>
    setParams(
      (p) => {
        const next = new URLSearchParams(p);
        if (edition === "customer") {
          next.set("edition", "customer");
          next.set("sections", sections.join(","));
        } else {
          next.delete("edition");
          next.delete("sections");
        }
        return next;
      },
      { replace: true },
    );
  let n = 0;
  const parts: ReactNode[] = [];
  const part = (key: string, title: string, children: ReactNode, pageBreak = false) =>
    parts.push(
      <Part key={key} n={++n} title={title} pageBreak={pageBreak}>
        {children}
      </Part>,
    );
  part("summary", t("history.summary"), <HistoryFacts history={h} />);
  if (on("chemistry")) part("chemistry", t("history.chemistry"), <ChemistryTable history={h} />);
  if (on("conditions")) part("conditions", t("history.conditions"), <ConditionsTable history={h} />);
  if (on("samples")) part("samples", t("history.samples"), <SamplesLine history={h} />);
  if (on("slabs")) {
    part(
      "slabs",
      t("history.slabs", { n: h.slabs.length }),
      <>
        <SlabsTable history={h} traced={h.edition.cover?.slabs[0] ?? null} />
        {on("conditions") ? (
          <>
            <h3 className="mb-2 mt-4 text-sm font-bold">{t("history.slabConditions")}</h3>
            <div className="overflow-x-auto print:overflow-visible">
              <SlabConditionsTable history={h} />
            </div>
          </>
        ) : null}
      </>,
    );
  }
  if (on("defects"))
    part(
      "defects",
      t("history.defects", { n: h.defects.length }),
      <DefectsList history={h} renderCauses={customer ? undefined : causeChips} />,
      h.defects.length > 0,
    );
  if (on("causes")) {
    part(
      "causes",
      t(customer ? "history.causesCustomer" : "history.causesInternal", { count: h.causes.length, n: count(h.causes.length) }),
      <div className="overflow-x-auto print:overflow-visible">
        <CausesTable history={h} />
      </div>,
    );
  }
  if (on("investigations"))
    part(
      "investigations",
      t(customer ? "history.investigationsCustomer" : "history.investigationsInternal", { n: h.investigations.length }),
      <RelatedRecords history={h} show="investigations" />,
    );
  if (on("claims")) part("claims", t("history.claims", { n: h.claims.length }), <RelatedRecords history={h} show="claims" />);
  if (on("audit")) {
    part(
      "audit",
      customer ? t("history.changesCustomer", { n: h.audit.length }) : t("history.auditInternal", { n: h.audit.length }),
      <div className="overflow-x-auto print:overflow-visible">
        <AuditTable history={h} />
      </div>,
      h.audit.length > 10,
    );
  }

  return (
    <article
      className="printable-history mx-auto max-w-5xl space-y-5 print:max-w-none print:space-y-4"
      data-testid="printable-history"
      data-edition={h.edition.kind}
    >
      <div className="flex flex-wrap items-center gap-3 print:hidden">
        <Link to={heatPath} className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          {t("history.heatLink", { heat: h.heat.heatNo })}
        </Link>
        <span className="text-ink-400">·</span>
        <Link
          to={`/trace?q=${encodeURIComponent(h.heat.heatNo)}`}
          className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
        >
          {t("history.trace")}
        </Link>
        {choice.claim && h.edition.cover ? (
          <>
            <span className="text-ink-400">·</span>
            <Link
              to={`/claims/${choice.claim}`}
              className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
              data-testid="history-back-to-claim"
            >
              {t("history.backToClaim", { claim: h.edition.cover.claimNo })}
            </Link>
          </>
        ) : null}
        <div className="ml-auto flex flex-wrap items-start gap-2">
          <Button onClick={() => window.print()} data-testid="print-history">
            <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
              <path d="M4 6V2h8v4M4 12H2V7h12v5h-2M4 10h8v4H4z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
            </svg>
            {t("history.print")}
          </Button>
          <HistoryWorkbookButton heatNo={h.heat.heatNo} label={t("history.workbook")} edition={choice} />
        </div>
      </div>
      <section className="rounded-lg border border-ink-200 bg-white p-4 print:hidden" aria-label={t("history.whatItHolds")}>
        <EditionChooser
          name="history"
          // The choice as ticked, not as last answered, so a tick shows at once (the address follows).
          value={picked}
          onChange={(v) => {
            setPicked(v);
            setChoice(v.edition, v.sections);
          }}
        />
        {hist.isFetching ? <p className="mt-2 text-xs text-ink-600">{t("history.updating")}</p> : null}
      </section>
      {h.edition.cover ? <Cover h={h} /> : null}
      <header className="border-b-4 border-ink-900 pb-3">
        <div className="text-xs font-semibold uppercase tracking-widest text-ink-600">{customer ? t("history.kicker") : t("history.kickerInternal")}</div>
        <h1 className="text-3xl font-bold tracking-tight text-ink-900">{t("history.title", { heat: h.heat.heatNo })}</h1>
        <p className="mt-1 text-sm text-ink-700">
          {t("history.prepared", { when: dateTime(h.generatedAt) })}
          {customer ? null : (
            <>
              {" "}
              <Trans t={t} i18nKey="history.record" components={{ 1: <Link to={heatPath} className="font-semibold text-strand-700 underline" /> }} />
              <PrintUrl path={heatPath} />
            </>
          )}
        </p>
      </header>
      <Notice tone="caution" title={t("history.procedureTitle")}>
        {t("history.procedure")}
      </Notice>
      {parts}
      <footer className="border-t border-ink-300 pt-2 text-xs text-ink-600">
        {h.edition.cover
          ? t("history.footerClaim", { heat: h.heat.heatNo, claim: h.edition.cover.claimNo, when: dateTime(h.generatedAt) })
          : t("history.footer", { heat: h.heat.heatNo, when: dateTime(h.generatedAt) })}
      </footer>
    </article>
  );
}

export const ErrorBoundary = RouteError;
