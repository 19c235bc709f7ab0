import { tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import type { TokenItem } from "@/lib/db/tokens";
import { RevokeButton } from "@/app/(workspace)/tokens/revoke-button";

/**
 * API tokens as a table, newest first, each revocable while active: a person's own on the tokens page, everybody's
 * (with an owner column) on the admin "all tokens" page. Secrets are never shown; the hint is the first characters.
 */
export function TokenTable({ tokens, now, showOwner, caption, testId }: { tokens: TokenItem[]; now: Date; showOwner: boolean; caption: string; testId: string }) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full border-collapse bg-surface text-sm" data-testid={testId}>
        <caption className="sr-only">{caption}</caption>
        <thead>
          <tr className="border-b border-line text-left text-xs text-muted">
            {showOwner && <th scope="col" className={thClass}>Owner</th>}
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
              const expired = t.expiresAt !== null && Date.parse(t.expiresAt) <= now.getTime();
              return (
                <tr key={t.id} className="border-b border-line last:border-0" data-token-id={t.id} data-token={t.name}>
                  {showOwner && <td className={`${tdClass} text-xs`}>{t.owner}</td>}
                  <td className={tdClass}>{t.name}</td>
                  <td className={`${tdClass} font-mono text-xs`}>{t.hint}</td>
                  <td className={`${tdClass} font-mono text-xs`}>{t.scopes.join(", ")}</td>
                  <td className={`${tdClass} font-mono text-xs`}>{t.models === null ? "every model" : t.models.join(", ")}</td>
                  <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{t.expiresAt === null ? "never" : formatTime(t.expiresAt)}</td>
                  <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{t.lastUsedAt === null ? "never" : formatTime(t.lastUsedAt)}</td>
                  <td className={`${tdClass} text-right font-mono text-xs`} data-testid="token-uses">{t.useCount}</td>
                  <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{formatTime(t.createdAt)}</td>
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
    </div>
  );
}
