import type { Role } from "../access/roles.ts";
import { getConfig } from "../config/index.ts";
import { INVITATION_HOURS } from "../db/invitations.ts";
import { NOTICE_WINDOW_DAYS } from "../db/tokens.ts";
import type { MailRecipient, OutgoingMail } from "./index.ts";
import { versionPageUrl } from "./review.ts";

/** "2027-03-01 00:00 UTC" */
function utc(iso: string): string {
  return `${iso.slice(0, 16).replace("T", " ")} UTC`;
}

/** The accept page of an invitation (PUBLIC_BASE_URL), the one-time secret in its path. */
export function invitationLink(secret: string): string {
  return `${getConfig().mail.publicBaseUrl}/invite/${secret}`;
}

/** To an invited address: who invites, the roles, the one-time link and when it stops working. */
export function invitationMail(input: { email: string; roles: readonly Role[]; secret: string; expiresAt: string; invitedBy: string }): OutgoingMail {
  return {
    kind: "invitation",
    to: [{ email: input.email, userId: null }],
    subject: "You are invited to the Stillpoint model registry",
    text: [
      `${input.invitedBy} invites you to Stillpoint, the registry of tilt-to-length surrogate models, with the role${input.roles.length === 1 ? "" : "s"} ${input.roles.join(", ")}.`,
      "",
      "Open this link to choose your name and password:",
      invitationLink(input.secret),
      "",
      `The link works once and until ${utc(input.expiresAt)} (${INVITATION_HOURS} hours after it was sent).`,
      "If you did not expect this, ignore the message: nothing happens until the link is used.",
    ].join("\n"),
  };
}

export interface RetiredVersionFacts {
  versionId: number;
  slug: string;
  version: number;
  reason: string;
  sunsetAt: string;
  successorVersion: number | null;
}

/** To an owner of tokens that evaluated a retired version lately: reason, sunset and successor, and which tokens. */
export function versionRetiredMail(facts: RetiredVersionFacts, owner: MailRecipient & { name: string; tokens: readonly string[] }): OutgoingMail {
  const successor =
    facts.successorVersion === null
      ? "No successor was named; choose another released version of the model, or ask the model's owners."
      : `Its successor is version ${facts.successorVersion}: ${versionPageUrl(facts.slug, facts.successorVersion)}\n` +
        `Point your scripts at /api/v1/models/${facts.slug}/versions/${facts.successorVersion}/evaluate.`;
  return {
    kind: "version-retired",
    to: [{ email: owner.email, userId: owner.userId }],
    versionId: facts.versionId,
    subject: `${facts.slug} version ${facts.version} is retired; evaluation ends ${utc(facts.sunsetAt)}`,
    text: [
      `Hello ${owner.name},`,
      "",
      `Version ${facts.version} of the model "${facts.slug}" has been retired: ${facts.reason}`,
      "",
      `It can still be evaluated until its sunset, ${utc(facts.sunsetAt)}; after that the API answers 410 Gone.`,
      successor,
      "",
      `You get this because your token${owner.tokens.length === 1 ? "" : "s"} ${owner.tokens.map((t) => `"${t}"`).join(", ")} evaluated this version in the last ${NOTICE_WINDOW_DAYS} days.`,
      `The version: ${versionPageUrl(facts.slug, facts.version)}`,
    ].join("\n"),
  };
}
