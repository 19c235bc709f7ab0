import Link from "next/link";
import { linkClass, tdClass, thClass } from "@/components/empty-state";
import { formatIndexList, formatTime } from "@/components/format";
import { StateBadge } from "@/components/state-badge";
import type { ModelItem } from "@/lib/db/models";

export function CatalogueTable({ models, setupNames }: { models: ModelItem[]; setupNames: Map<number, string> }) {
  return (
    <table className="w-full border-collapse bg-surface text-sm" data-testid="catalogue-table">
      <caption className="sr-only">Models, with their versions and states</caption>
      <thead>
        <tr className="border-b border-line text-left text-xs text-muted">
          <th scope="col" className={thClass}>Model</th>
          <th scope="col" className={thClass}>Setup</th>
          <th scope="col" className={thClass}>Zernike set</th>
          <th scope="col" className={thClass}>Versions</th>
          <th scope="col" className={`${thClass} text-right`}>Latest released</th>
          <th scope="col" className={thClass}>Updated (UTC)</th>
        </tr>
      </thead>
      <tbody>
        {models.map((model) => (
          <tr key={model.slug} className="border-b border-line align-top last:border-0" data-model={model.slug}>
            <td className={tdClass}>
              <Link href={`/models/${model.slug}`} className={`font-medium ${linkClass}`}>
                {model.name}
              </Link>
              <div className="font-mono text-xs text-muted">{model.slug}</div>
            </td>
            <td className={tdClass}>{setupNames.get(model.setupId) ?? `setup ${model.setupId}`}</td>
            <td className={`${tdClass} font-mono text-xs`}>
              {model.zernike.ordering === "noll" ? "Noll" : "ANSI"} {formatIndexList(model.zernike.indices)}
              <span className="text-muted"> ({model.zernike.indices.length})</span>
            </td>
            <td className={tdClass}>
              {model.versions.length === 0 ? (
                <span className="text-muted">none yet</span>
              ) : (
                <ul className="flex flex-wrap gap-1" aria-label={`Versions of ${model.name}`}>
                  {model.versions.map((v) => (
                    <li key={v.version}>
                      <Link
                        href={`/models/${model.slug}/versions/${v.version}`}
                        className="inline-flex items-center gap-1 rounded-sm hover:bg-sunken"
                        aria-label={`version ${v.version}, ${v.state}, order ${v.order}, ${v.termCount} terms`}
                      >
                        <span className="font-mono text-xs">v{v.version}</span>
                        <StateBadge state={v.state} />
                      </Link>
                    </li>
                  ))}
                </ul>
              )}
            </td>
            <td className={`${tdClass} text-right font-mono`}>
              {model.latestReleasedVersion === null ? <span className="text-muted">–</span> : `v${model.latestReleasedVersion}`}
            </td>
            <td className={`${tdClass} font-mono text-xs`}>{formatTime(model.updatedAt)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
