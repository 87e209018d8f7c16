/**
 * The options of a "which defect" choice that takes a whole category or one type, valued
 * `category:CODE` / `type:CODE` (risk models, operating windows).
 */
export function DefectTargetOptions({ categories, types }: { categories: { code: string; name: string }[]; types: { code: string; name: string }[] }) {
  return (
    <>
      <optgroup label="Categories">
        {categories.map((c) => (
          <option key={c.code} value={`category:${c.code}`}>
            {c.name} (any type)
          </option>
        ))}
      </optgroup>
      <optgroup label="Defect types">
        {types.map((t) => (
          <option key={t.code} value={`type:${t.code}`}>
            {t.name} ({t.code})
          </option>
        ))}
      </optgroup>
    </>
  );
}
