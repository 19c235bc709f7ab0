import type { Metadata } from "next";
import Link from "next/link";
import { EmptyState, linkClass, SectionHeading } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { TokenTable } from "@/components/token-table";
import { TOKEN_SCOPES } from "@/lib/access/actor";
import { listModels } from "@/lib/db/models";
import { listTokens } from "@/lib/db/tokens";
import { TokenForm } from "./token-form";

export const metadata: Metadata = { title: "Tokens" };

export default async function TokensPage() {
  const { user, actor } = await requirePageActor();
  const [tokens, models] = await Promise.all([listTokens(actor), listModels(actor, {}, { limit: 500, cursor: null })]);
  const scopes = TOKEN_SCOPES.filter((s) => s !== "train" || user.roles.includes("modeller"));
  return (
    <div className="grid gap-8 xl:grid-cols-[22rem_1fr]">
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
          <TokenTable tokens={tokens} now={new Date()} showOwner={false} caption="Your API tokens (their secrets are never shown again)" testId="tokens-table" />
        )}
      </section>
    </div>
  );
}
