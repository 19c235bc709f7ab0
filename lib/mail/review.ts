import { getConfig } from "../config/index.ts";
import { SURROGATE_NOTICE } from "../surrogate/model.ts";
import type { MailRecipient, OutgoingMail } from "./index.ts";

/** The version page's address for links in mails (PUBLIC_BASE_URL). */
export function versionPageUrl(slug: string, version: number): string {
  return `${getConfig().mail.publicBaseUrl}/models/${encodeURIComponent(slug)}/versions/${version}`;
}

export interface SubmittedVersionFacts {
  versionId: number;
  slug: string;
  modelName: string;
  version: number;
  order: number;
  termCount: number;
  /** Worst validation error over every node and axis, pm/nrad, and relative to the peak; null without statistics. */
  maxAbsErrorPmPerNrad: number | null;
  maxErrorRelativeToPeak: number | null;
  maxTotalRmsNm: number;
  author: string;
}

const fmt = (x: number) => (Math.abs(x) >= 1e4 || (x !== 0 && Math.abs(x) < 1e-3) ? x.toExponential(3) : String(Number(x.toPrecision(4))));

/** To every reviewer but the author: a version waits for review. */
export function versionSubmittedMail(facts: SubmittedVersionFacts, reviewers: readonly MailRecipient[]): OutgoingMail {
  const url = versionPageUrl(facts.slug, facts.version);
  const worst =
    facts.maxAbsErrorPmPerNrad === null
      ? "no validation set (no residual statistics)"
      : `${fmt(facts.maxAbsErrorPmPerNrad)} pm/nrad` + (facts.maxErrorRelativeToPeak === null ? "" : ` (${fmt(facts.maxErrorRelativeToPeak * 100)} % of the peak)`);
  return {
    kind: "version-submitted",
    to: reviewers,
    versionId: facts.versionId,
    subject: `Review requested: ${facts.slug} version ${facts.version}`,
    text: [
      `${facts.author} submitted version ${facts.version} of ${facts.modelName} (${facts.slug}) for review.`,
      "",
      `Order: ${facts.order}, ${facts.termCount} terms`,
      `Worst validation error: ${worst}`,
      `Valid up to ${fmt(facts.maxTotalRmsNm)} nm RMS total wavefront error`,
      "",
      `Look at it and decide: ${url}`,
      "",
      SURROGATE_NOTICE,
    ].join("\n"),
  };
}

export interface DecisionFacts {
  versionId: number;
  slug: string;
  modelName: string;
  version: number;
  decision: "approve" | "return";
  comment: string | null;
  reviewer: string;
}

/** To the version's modeller: the reviewer's decision and comment. */
export function versionDecidedMail(facts: DecisionFacts, author: MailRecipient): OutgoingMail {
  const url = versionPageUrl(facts.slug, facts.version);
  const approved = facts.decision === "approve";
  return {
    kind: "version-decided",
    to: [author],
    versionId: facts.versionId,
    subject: approved ? `Released: ${facts.slug} version ${facts.version}` : `Returned to draft: ${facts.slug} version ${facts.version}`,
    text: [
      approved
        ? `${facts.reviewer} approved version ${facts.version} of ${facts.modelName} (${facts.slug}); it is released.`
        : `${facts.reviewer} returned version ${facts.version} of ${facts.modelName} (${facts.slug}) to draft.`,
      "",
      "Comment:",
      facts.comment ?? "(none)",
      "",
      approved ? `Version page: ${url}` : `Once the comment is answered, submit it again from its page: ${url}`,
    ].join("\n"),
  };
}
