import { useTranslation } from "react-i18next";
import { Notice } from "@/components/ui/notice";

/** DOMAIN.md §7: the yard's own safety rules come first. */
export function HotYardCaution() {
  const { t } = useTranslation();
  return (
    <Notice tone="caution" title={t("hotYard.title")}>
      {t("hotYard.text")}
    </Notice>
  );
}
