import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { PageHeader } from "@/components/ui/card";

export function Component() {
  const { t } = useTranslation();
  return (
    <div>
      <PageHeader title={t("error.pageNotFoundTitle")} subtitle={t("error.pageNotFound")} />
      <Link to="/" className="font-semibold text-strand-700 underline">
        {t("error.goHome")}
      </Link>
    </div>
  );
}
