import type { ReactNode } from "react";
import type { UseFormRegisterReturn } from "react-hook-form";

/**
 * A group of checkboxes for one list-valued field of a form (token scopes and models, an invitation's roles): the
 * legend, one box per option with its name and a short description, and under them the field's error or else its
 * hint; the group is described by whichever is shown.
 */
export function CheckboxGroup({
  id,
  legend,
  options,
  registration,
  error,
  hint,
}: {
  id: string;
  legend: string;
  options: { value: string; description: ReactNode }[];
  /** react-hook-form's register(field) for the list. */
  registration: UseFormRegisterReturn;
  error?: string;
  hint?: ReactNode;
}) {
  const describedBy = error ? `${id}-error` : hint ? `${id}-hint` : undefined;
  return (
    <fieldset className="flex flex-col gap-1" aria-describedby={describedBy}>
      <legend className="mb-1 text-sm font-medium">{legend}</legend>
      {options.map((option) => (
        <label key={option.value} className="flex items-baseline gap-2 text-sm">
          <input type="checkbox" value={option.value} {...registration} />
          <span className="font-mono text-xs">{option.value}</span>
          <span className="text-xs text-muted">{option.description}</span>
        </label>
      ))}
      {error ? (
        <p id={`${id}-error`} className="text-xs text-fault">
          {error}
        </p>
      ) : (
        hint && (
          <p id={`${id}-hint`} className="text-xs text-muted">
            {hint}
          </p>
        )
      )}
    </fieldset>
  );
}
