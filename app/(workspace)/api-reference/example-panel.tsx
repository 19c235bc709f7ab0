"use client";

import { useState } from "react";
import { VersionPicker, type PickableModel } from "@/components/version-picker";
import { curlExample, exampleCoefficients, pythonExample, typescriptExample } from "./examples";

const LANGUAGES = [
  { id: "curl", label: "curl", make: curlExample },
  { id: "python", label: "Python (requests + NumPy)", make: pythonExample },
  { id: "typescript", label: "TypeScript (fetch)", make: typescriptExample },
] as const;

/** Copy-ready examples filled with the reader's choice of model version. */
export function ExamplePanel({
  baseUrl,
  models,
  nollIndicesBySlug,
  initial,
}: {
  baseUrl: string;
  models: PickableModel[];
  nollIndicesBySlug: Record<string, number[]>;
  initial: { slug: string; version: number } | null;
}) {
  const [target, setTarget] = useState(initial);
  const [language, setLanguage] = useState<(typeof LANGUAGES)[number]["id"]>("curl");
  const [copied, setCopied] = useState(false);
  if (!target) return <p className="text-sm text-muted">There is no model version you may evaluate yet, so there is nothing to fill the examples with.</p>;
  const chosen = LANGUAGES.find((l) => l.id === language)!;
  const text = chosen.make({
    baseUrl,
    slug: target.slug,
    version: target.version,
    coefficientsNm: exampleCoefficients(nollIndicesBySlug[target.slug] ?? []),
  });

  async function copy() {
    try {
      await navigator.clipboard.writeText(text);
      setCopied(true);
      setTimeout(() => setCopied(false), 1500);
    } catch {
      setCopied(false);
    }
  }

  return (
    <div className="flex flex-col gap-2" data-testid="examples">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <VersionPicker
          models={models}
          slug={target.slug}
          version={target.version}
          onChange={(slug, version) => setTarget({ slug, version })}
          label="Fill the examples with"
        />
        <div role="tablist" aria-label="Language" className="flex gap-1">
          {LANGUAGES.map((l) => (
            <button
              key={l.id}
              type="button"
              role="tab"
              aria-selected={l.id === language}
              onClick={() => setLanguage(l.id)}
              className={`rounded border px-2 py-1 text-xs ${l.id === language ? "border-accent bg-accent text-accent-ink" : "border-line hover:bg-sunken"}`}
            >
              {l.label}
            </button>
          ))}
        </div>
      </div>
      <div className="relative">
        <pre className="max-h-[32rem] overflow-auto rounded border border-line bg-sunken p-3 font-mono text-xs leading-5" data-testid={`example-${language}`}>
          <code>{text}</code>
        </pre>
        <button type="button" onClick={copy} className="absolute right-2 top-2 rounded border border-line bg-surface px-2 py-0.5 text-xs hover:bg-sunken">
          {copied ? "Copied" : "Copy"}
        </button>
      </div>
    </div>
  );
}
