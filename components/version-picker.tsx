"use client";

import { useId } from "react";

/** A model and its versions, as the pickers offer them. */
export interface PickableModel {
  slug: string;
  name: string;
  versions: { version: number; state: string }[];
}

/** One select of every model version the reader may use, grouped by model; the value is "slug/version". */
export function VersionPicker({
  models,
  slug,
  version,
  onChange,
  label = "Model version",
}: {
  models: PickableModel[];
  slug: string;
  version: number;
  onChange: (slug: string, version: number) => void;
  label?: string;
}) {
  const id = useId();
  return (
    <div className="flex items-center gap-2 text-sm">
      <label htmlFor={id} className="text-muted">
        {label}
      </label>
      <select
        id={id}
        value={`${slug}/${version}`}
        onChange={(event) => {
          const [s, v] = event.target.value.split("/");
          onChange(s, Number(v));
        }}
        className="rounded border border-line bg-surface px-2 py-1 font-mono text-sm"
        data-testid="version-picker"
      >
        {models.map((m) => (
          <optgroup key={m.slug} label={m.name}>
            {m.versions.map((v) => (
              <option key={v.version} value={`${m.slug}/${v.version}`}>
                {m.slug} v{v.version} ({v.state})
              </option>
            ))}
          </optgroup>
        ))}
      </select>
    </div>
  );
}
