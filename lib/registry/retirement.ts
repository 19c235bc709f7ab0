import type { Knex } from "knex";
import type { Actor } from "../access/actor.ts";
import { db } from "../db/knex.ts";
import { flushTokenUsage, recentVersionUsers } from "../db/tokens.ts";
import { retireVersion, type VersionDetail } from "../db/versions.ts";
import { versionRetiredMail } from "../mail/admin.ts";
import { dispatchMail, recordMail } from "../mail/index.ts";

/**
 * Retire a released version and tell every owner of a token that evaluated it within the notice window (one e-mail
 * each, naming the successor and the sunset). The notices are written in the retirement's own transaction, so they
 * exist exactly when the retirement does, and handed to the mail queue after the commit: a mail that cannot go out
 * is retried by the mail workers and never undoes or holds up the retirement.
 */
export async function retireWithNotices(
  actor: Actor,
  slug: string,
  version: number,
  input: { reason: string; sunsetAt: string; successorVersion: number | null },
  now = new Date(),
  conn: Knex = db(),
): Promise<{ version: VersionDetail; notices: number }> {
  // Evaluations counted in this process's memory reach the usage table first (other processes flush every second).
  await flushTokenUsage(conn).catch((error: Error) => console.error(`could not record token usage before a retirement: ${error.message}`));
  let ids: number[] = [];
  const detail = await retireVersion(actor, slug, version, input, now, conn, async (trx, versionId) => {
    const owners = await recentVersionUsers(versionId, now, trx);
    const facts = { versionId, slug, version, reason: input.reason, sunsetAt: new Date(input.sunsetAt).toISOString(), successorVersion: input.successorVersion };
    ids = await recordMail(trx, owners.map((owner) => versionRetiredMail(facts, owner)));
  });
  await dispatchMail(ids);
  return { version: detail, notices: ids.length };
}
