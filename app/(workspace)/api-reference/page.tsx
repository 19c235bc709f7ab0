import type { Metadata } from "next";
import { headers } from "next/headers";
import { linkClass, SectionHeading } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { evaluableModels } from "@/components/server/pickable-models";
import { requirePageActor } from "@/components/server/page";
import { StandingNotice } from "@/components/standing-notice";
import { openApiDocument } from "@/lib/api/openapi";
import { listModels } from "@/lib/db/models";
import { toNollIndices } from "@/lib/optics/zernike";
import { ExamplePanel } from "./example-panel";
import { groupedOperations, OperationCard, SchemaView, type OpenApiDocument } from "./operation-list";

export const metadata: Metadata = { title: "API reference" };

/** The model the examples start with when the reader may evaluate it: the demo's transmit telescope. */
const DEFAULT_MODEL = "velora-transmit";

export default async function ApiReferencePage() {
  const { actor } = await requirePageActor();
  const [{ models, latestReleased }, all, requestHeaders] = await Promise.all([
    evaluableModels(actor),
    listModels(actor, {}, { limit: 500, cursor: null }),
    headers(),
  ]);
  const document = openApiDocument() as unknown as OpenApiDocument;
  const groups = groupedOperations(document);
  const host = requestHeaders.get("x-forwarded-host") ?? requestHeaders.get("host") ?? "127.0.0.1:3000";
  const protocol = requestHeaders.get("x-forwarded-proto") ?? "http";
  const baseUrl = `${protocol}://${host}`;
  const nollIndicesBySlug = Object.fromEntries(all.items.map((m) => [m.slug, toNollIndices(m.zernike)]));

  const preferred = models.find((m) => m.slug === DEFAULT_MODEL) ?? models[0];
  const released = preferred ? latestReleased.get(preferred.slug) : null;
  const initial = preferred
    ? { slug: preferred.slug, version: released && preferred.versions.some((v) => v.version === released) ? released : preferred.versions[preferred.versions.length - 1].version }
    : null;
  const schemas = Object.entries(document.components?.schemas ?? {});

  return (
    <div className="flex flex-col gap-6">
      <PageHeading title="API reference">
        <a href="/api/v1/openapi.json" className={`text-sm ${linkClass}`}>
          openapi.json
        </a>
      </PageHeading>
      <div className="grid gap-6 lg:grid-cols-[14rem_1fr]">
        <nav aria-label="Operations" className="text-xs lg:sticky lg:top-4 lg:max-h-[90vh] lg:self-start lg:overflow-y-auto">
          <ul className="flex flex-col gap-2">
            <li>
              <a href="#examples" className={linkClass}>
                Examples
              </a>
            </li>
            {groups.map(([group, operations]) => (
              <li key={group}>
                <p className="font-medium text-muted">{group}</p>
                <ul>
                  {operations.map((o) => (
                    <li key={o.anchor}>
                      <a href={`#${o.anchor}`} className="flex items-center gap-1 py-0.5 hover:underline">
                        <span className="w-12 shrink-0 font-mono uppercase text-muted">{o.method}</span>
                        <span className="truncate font-mono" title={o.path}>
                          {o.path.replace(/^\/api\/v1/, "").replace("/models/{slug}/versions/{version}", "…/{version}").replace("/models/{slug}", "…/{slug}")}
                        </span>
                      </a>
                    </li>
                  ))}
                </ul>
              </li>
            ))}
            <li>
              <a href="#schemas" className={linkClass}>
                Schemas
              </a>
            </li>
          </ul>
        </nav>
        <div className="flex min-w-0 flex-col gap-6">
          <section aria-labelledby="about-heading" className="text-sm">
            <h2 id="about-heading" className="sr-only">
              About the API
            </h2>
            <p>
              JSON over HTTP under <span className="font-mono">{baseUrl}/api/v1</span>. Scripts send{" "}
              <span className="font-mono">Authorization: Bearer &lt;token&gt;</span> with a token from the{" "}
              <a href="/tokens" className={linkClass}>
                tokens page
              </a>
              ; the browser uses its session. A token acts for you, within its scopes (<span className="font-mono">read</span>,{" "}
              <span className="font-mono">evaluate</span>, <span className="font-mono">train</span>) and models. Versions are always pinned
              by number. Refusals and errors are RFC 9457 problem details (<span className="font-mono">application/problem+json</span>, the{" "}
              <a href="#schema-Problem" className={linkClass}>
                Problem
              </a>{" "}
              schema), with the field issues of a 422 in <span className="font-mono">issues</span>.
            </p>
            <div className="mt-2">
              <StandingNotice />
            </div>
          </section>

          <section id="examples" aria-labelledby="examples-heading" className="scroll-mt-4">
            <SectionHeading id="examples-heading">Examples</SectionHeading>
            <p className="mb-2 text-sm text-muted">
              Evaluate a wavefront, download the coefficients and use them with NumPy, and list the models, filled with the version you
              pick. Every answer that carries a surrogate number carries the notice as <span className="font-mono">notice</span>.
            </p>
            <ExamplePanel baseUrl={baseUrl} models={models} nollIndicesBySlug={nollIndicesBySlug} initial={initial} />
          </section>

          {groups.map(([group, operations]) => (
            <section key={group} aria-labelledby={`group-${group}`} className="flex flex-col gap-3">
              <SectionHeading id={`group-${group}`}>
                <span className="font-mono">/{group}</span>
              </SectionHeading>
              {operations.map((o) => (
                <OperationCard key={o.anchor} listed={o} />
              ))}
            </section>
          ))}

          <section id="schemas" aria-labelledby="schemas-heading" className="flex scroll-mt-4 flex-col gap-3">
            <SectionHeading id="schemas-heading">Schemas</SectionHeading>
            {schemas.map(([name, schema]) => (
              <details key={name} id={`schema-${name}`} className="scroll-mt-4 rounded border border-line bg-surface p-3">
                <summary className="cursor-pointer font-mono text-sm font-medium">{name}</summary>
                <div className="mt-2">
                  <SchemaView schema={schema} />
                </div>
              </details>
            ))}
          </section>
        </div>
      </div>
    </div>
  );
}
