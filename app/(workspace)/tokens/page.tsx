import type { Metadata } from "next";
import Link from "next/link";
import { EmptyState, linkClass, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { TOKEN_SCOPES } from "@/lib/access/actor";
import { listModels } from "@/lib/db/models";
import { listTokens } from "@/lib/db/tokens";
import { RevokeButton } from "./revoke-button";
import { TokenForm } from "./token-form";

export const metadata: Metadata = { title: "Tokens" };

export default async function TokensPage() {
  const { user, actor } = await requirePageActor();
  const [tokens, models] = await Promise.all([listTokens(actor), listModels(actor, {}, { limit: 500, cursor: null })]);
  const scopes = TOKEN_SCOPES.filter((s) => s !== "train" || user.roles.includes("modeller"));
  return (
    <div className="grid gap-8 lg:grid-cols-[24rem_1fr]">
      <section aria-labelledby="new-token-heading">
        <PageHeading id="new-token-heading" title="New API token" />
        <p className="mb-4 text-sm text-muted">
          A token lets a script act for you through the REST API (<span className="font-mono">Authorization: Bearer …</span>),
          never beyond your roles, and only with the scopes and models you give it. The{" "}
          <Link href="/api-reference" className={linkClass}>API reference</Link> has examples ready to copy.
        </p>
        <TokenForm scopes={scopes} models={models.items.map((m) => ({ slug: m.slug, name: m.name }))} />
      </section>
      <section aria-labelledby="tokens-heading">
        <SectionHeading id="tokens-heading" aside={<span className="text-xs text-muted">{tokens.length === 1 ? "1 token" : `${tokens.length} tokens`}</span>}>
          Your tokens
        </SectionHeading>
        {tokens.length === 0 ? (
          <EmptyState title="You have no tokens yet." testId="tokens-empty">
            Create one with the form to call the API from a script; the API is described at{" "}
            <Link href="/api-reference" className={linkClass}>API reference</Link>.
          </EmptyState>
        ) : (
          <table className="w-full border-collapse bg-surface text-sm" data-testid="tokens-table">
            <caption className="sr-only">Your API tokens (their secrets are never shown again)</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>Name</th>
                <th scope="col" className={thClass}>Starts with</th>
                <th scope="col" className={thClass}>Scopes</th>
                <th scope="col" className={thClass}>Models</th>
                <th scope="col" className={thClass}>Expires (UTC)</th>
                <th scope="col" className={thClass}>Last used</th>
                <th scope="col" className={`${thClass} text-right`}>Uses</th>
                <th scope="col" className={thClass}>Created</th>
                <th scope="col" className={thClass}>Status</th>
                <th scope="col" className={thClass}><span className="sr-only">Revoke</span></th>
              </tr>
            </thead>
            <tbody>
              {tokens
                .slice()
                .reverse()
                .map((t) => {
                  const expired = t.expiresAt !== null && Date.parse(t.expiresAt) <= Date.now();
                  return (
                    <tr key={t.id} className="border-b border-line last:border-0" data-token={t.name}>
                      <td className={tdClass}>{t.name}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.hint}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.scopes.join(", ")}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.models === null ? "every model" : t.models.join(", ")}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.expiresAt === null ? "never" : formatTime(t.expiresAt)}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.lastUsedAt === null ? "never" : formatTime(t.lastUsedAt)}</td>
                      <td className={`${tdClass} text-right font-mono text-xs`} data-testid="token-uses">{t.useCount}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{formatTime(t.createdAt)}</td>
                      <td className={`${tdClass} text-xs`} data-testid="token-status">
                        {t.revokedAt !== null ? (
                          <span className="text-muted">revoked {formatTime(t.revokedAt)}</span>
                        ) : expired ? (
                          <span className="text-muted">expired</span>
                        ) : (
                          <span className="text-good">active</span>
                        )}
                      </td>
                      <td className={tdClass}>{t.revokedAt === null && <RevokeButton id={t.id} name={t.name} />}</td>
                    </tr>
                  );
                })}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
