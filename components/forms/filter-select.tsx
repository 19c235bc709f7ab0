import { selectClass } from "@/components/forms/field";

/**
 * One drop-down of a GET filter form on a list page (the admin's tokens and audit log): a small label above, a first
 * option that filters nothing, then one option per value.
 */
export function FilterSelect({ name, label, value, anyLabel, options }: { name: string; label: string; value: string | undefined; anyLabel: string; options: readonly string[] }) {
  return (
    <label className="flex flex-col gap-1">
      <span className="text-xs text-muted">{label}</span>
      <select name={name} defaultValue={value ?? ""} className={selectClass}>
        <option value="">{anyLabel}</option>
        {options.map((option) => (
          <option key={option} value={option}>
            {option}
          </option>
        ))}
      </select>
    </label>
  );
}
