import { useTranslation } from "react-i18next";
import { ROLES, type Role } from "@shared/roles";

export function RolePicker({ value, onChange, name }: { value: Role[]; onChange: (roles: Role[]) => void; name: string }) {
  const { t } = useTranslation("admin");
  return (
    <fieldset className="flex flex-wrap gap-2">
      <legend className="sr-only">{t("users.rolePicker.legend")}</legend>
      {ROLES.map((r) => {
        const checked = value.includes(r);
        return (
          <label
            key={r}
            className={`flex min-h-11 cursor-pointer items-center gap-2 rounded-md border px-3 text-sm ${
              checked ? "border-strand-700 bg-strand-50 font-semibold" : "border-ink-300 bg-white"
            }`}
          >
            <input
              type="checkbox"
              name={name}
              value={r}
              checked={checked}
              onChange={(e) => onChange(e.target.checked ? [...value, r] : value.filter((x) => x !== r))}
              className="h-5 w-5 accent-strand-700"
            />
            {t(`common:roles.${r}`)}
          </label>
        );
      })}
    </fieldset>
  );
}
