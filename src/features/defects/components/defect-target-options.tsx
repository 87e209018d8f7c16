import { useTranslation } from "react-i18next";

/**
 * The options of a "which defect" choice that takes a whole category or one type, valued
 * `category:CODE` / `type:CODE` (risk models, operating windows).
 */
export function DefectTargetOptions({ categories, types }: { categories: { code: string; name: string }[]; types: { code: string; name: string }[] }) {
  const { t } = useTranslation("yard");
  return (
    <>
      <optgroup label={t("target.categories")}>
        {categories.map((c) => (
          <option key={c.code} value={`category:${c.code}`}>
            {t("target.category", { name: c.name })}
          </option>
        ))}
      </optgroup>
      <optgroup label={t("target.types")}>
        {types.map((d) => (
          <option key={d.code} value={`type:${d.code}`}>
            {t("target.type", { name: d.name, code: d.code })}
          </option>
        ))}
      </optgroup>
    </>
  );
}
