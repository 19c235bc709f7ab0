import type { Actor } from "../access/actor.ts";
import { answerBody, evaluateWavefronts } from "../registry/evaluate.ts";
import { serverComputePool } from "../registry/serverPool.ts";
import { parseEvaluateBody } from "../validation/evaluate.ts";
import { limitEvaluation } from "./rateLimit.ts";
import { versionParam } from "./request.ts";

/** An answer without a Response around it: the route handler wraps it in one, the direct path writes it itself. */
export interface PlainAnswer {
  headers: Record<string, string>;
  body: string | ReadableStream<Uint8Array>;
}

/**
 * `POST /models/{slug}/versions/{version}/evaluate` once the caller is known and the body is a JSON value: the route
 * handler (sessions and tokens, through Next.js) and server/direct-routes.ts (tokens) both answer with this.
 * `readBody` reads the JSON value, after the version number is checked.
 * @throws whatever the problem mapping turns into 404, 422, 429, 403, 410 or 503
 */
export async function evaluateAnswer(actor: Actor, params: { slug: string; version: string }, readBody: () => unknown): Promise<PlainAnswer> {
  const number = versionParam(params.version);
  const body = await parseEvaluateBody(await readBody());
  await limitEvaluation(actor, body.wavefronts.length);
  const answer = await evaluateWavefronts(actor, params.slug, number, body, { pool: serverComputePool });
  return { body: answerBody(answer), headers: { "content-type": "application/json", "cache-control": "no-store", ...answer.headers } };
}
