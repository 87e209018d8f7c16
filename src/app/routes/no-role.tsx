import { useTranslation } from "react-i18next";
import { PageHeader } from "@/components/ui/card";

export function Component() {
  const { t } = useTranslation();
  return <PageHeader title={t("noRole.title")} subtitle={t("noRole.subtitle")} />;
}
