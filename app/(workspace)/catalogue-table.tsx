import type { CatalogueEntry } from "@/lib/db/models";

export function CatalogueTable({ entries }: { entries: CatalogueEntry[] }) {
  if (entries.length === 0) {
    return (
      <div className="rounded border border-dashed border-line bg-surface px-4 py-6" data-testid="catalogue-empty">
        <p className="font-medium">No models in the catalogue yet.</p>
        <p className="mt-1 text-sm text-muted">
          A model appears here once a modeller registers it against an optical setup. The catalogue is read from the
          database on every visit.
        </p>
      </div>
    );
  }
  return (
    <table className="w-full border-collapse bg-surface text-sm" data-testid="catalogue-table">
      <caption className="sr-only">Models</caption>
      <thead>
        <tr className="border-b border-line text-left text-xs text-muted">
          <th scope="col" className="px-2 py-1.5 font-medium">Model</th>
          <th scope="col" className="px-2 py-1.5 font-medium">Slug</th>
          <th scope="col" className="px-2 py-1.5 font-medium">Setup</th>
          <th scope="col" className="px-2 py-1.5 text-right font-medium">Wavelength (nm)</th>
          <th scope="col" className="px-2 py-1.5 font-medium">Zernike terms</th>
          <th scope="col" className="px-2 py-1.5 font-medium">Updated (UTC)</th>
        </tr>
      </thead>
      <tbody>
        {entries.map((entry) => (
          <tr key={entry.slug} className="border-b border-line last:border-0">
            <td className="px-2 py-1.5">{entry.name}</td>
            <td className="px-2 py-1.5 font-mono text-xs">{entry.slug}</td>
            <td className="px-2 py-1.5">{entry.setupName}</td>
            <td className="px-2 py-1.5 text-right font-mono">{entry.wavelengthNm}</td>
            <td className="px-2 py-1.5">
              {entry.zernikeTermCount} ({entry.zernikeOrdering})
            </td>
            <td className="px-2 py-1.5 font-mono text-xs">{entry.updatedAt.slice(0, 16).replace("T", " ")}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
