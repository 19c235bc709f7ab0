import Link from "next/link";
import { linkClass } from "@/components/empty-state";

/** Where a model's page sits: Catalogue / slug, and / version N on the pages of one version. */
export function ModelTrail({ slug, version }: { slug: string; version?: number }) {
  return (
    <p className="text-xs text-muted">
      <Link href="/" className={linkClass}>
        Catalogue
      </Link>{" "}
      /{" "}
      <Link href={`/models/${slug}`} className={`font-mono ${linkClass}`}>
        {slug}
      </Link>
      {version !== undefined && (
        <>
          {" "}
          /{" "}
          <Link href={`/models/${slug}/versions/${version}`} className={linkClass}>
            version {version}
          </Link>
        </>
      )}
    </p>
  );
}
