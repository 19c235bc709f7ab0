import type { IncomingMessage, ServerResponse } from "node:http";
import { evaluateAnswer, type PlainAnswer } from "../lib/api/evaluate.ts";
import { problemAnswer } from "../lib/api/problem.ts";
import { MAX_JSON_BYTES, parseJsonText } from "../lib/api/request.ts";
import { API_CONTENT_SECURITY_POLICY, STATIC_SECURITY_HEADERS } from "../lib/api/securityHeaders.ts";
import { requestAddress } from "../lib/auth/address.ts";
import { bearerActor } from "../lib/auth/request.ts";
import { PayloadTooLargeError } from "../lib/errors.ts";

/** A direct answer: the work of a route after the request is read, on plain Node objects (no Request or Response). */
type DirectHandler = (req: IncomingMessage, params: Record<string, string>, body: Buffer) => Promise<PlainAnswer>;

interface DirectRoute {
  method: string;
  pattern: RegExp;
  names: string[];
  handler: DirectHandler;
  /** Bytes of body read before the handler sees it (one more tells the handler the body is too large). */
  maxBodyBytes: number;
}

/** A JSON body as the route handlers read it (lib/api/request.ts readJsonValue), from bytes already in hand. */
function jsonBody(body: Buffer): unknown {
  if (body.length > MAX_JSON_BYTES) throw new PayloadTooLargeError(`The body is over the limit of ${MAX_JSON_BYTES} bytes.`);
  return parseJsonText(body.toString("utf8"));
}

/**
 * Routes a token-carrying client calls at high rates, answered by the same lib/ function as their route handler but
 * without the framework's request pipeline or the Web Request and Response objects (which cost more CPU per request
 * than the evaluation itself: the evaluate API's single-offset requests would spend most of their time there). Only
 * requests with an `Authorization` header take this path: they need no session cookie, page rendering or redirect,
 * and the function does every check itself. Everything else, and every browser request, goes through Next.js.
 */
const DIRECT_ROUTES: DirectRoute[] = [
  {
    method: "POST",
    pattern: /^\/api\/v1\/models\/([^/]+)\/versions\/([^/]+)\/evaluate\/?$/,
    names: ["slug", "version"],
    handler: async (req, params, body) =>
      evaluateAnswer(await bearerActor(req.headers.authorization!, requestAddress(req.headers)), { slug: params.slug, version: params.version }, () => jsonBody(body)),
    maxBodyBytes: MAX_JSON_BYTES,
  },
];

/** The headers next.config.ts gives every API answer, which the direct answers carry as well. */
const DIRECT_HEADERS: Record<string, string> = {
  ...Object.fromEntries(STATIC_SECURITY_HEADERS.map(({ key, value }) => [key.toLowerCase(), value])),
  "content-security-policy": API_CONTENT_SECURITY_POLICY,
};

/** The direct handler for a request, or null when Next.js should answer it. */
export function directRoute(req: IncomingMessage): ((req: IncomingMessage, res: ServerResponse) => Promise<void>) | null {
  if (req.headers.authorization === undefined || req.url === undefined) return null;
  const path = req.url.split("?", 1)[0];
  for (const route of DIRECT_ROUTES) {
    if (req.method !== route.method) continue;
    const match = route.pattern.exec(path);
    if (!match) continue;
    const params: Record<string, string> = {};
    try {
      route.names.forEach((name, i) => (params[name] = decodeURIComponent(match[i + 1])));
    } catch {
      return null; // a malformed escape: let the framework answer it
    }
    return (incoming, res) => answer(route, params, incoming, res);
  }
  return null;
}

/** The request's body, read up to `maxBytes + 1` bytes (a longer one is cut there, and the handler refuses it). */
async function readBody(req: IncomingMessage, maxBytes: number): Promise<Buffer> {
  const chunks: Buffer[] = [];
  let length = 0;
  for await (const chunk of req as AsyncIterable<Buffer>) {
    chunks.push(chunk);
    length += chunk.length;
    if (length > maxBytes) break;
  }
  return chunks.length === 1 ? chunks[0] : Buffer.concat(chunks);
}

async function answer(route: DirectRoute, params: Record<string, string>, req: IncomingMessage, res: ServerResponse): Promise<void> {
  let status = 200;
  let answered: PlainAnswer;
  try {
    // Read whole (bounded) rather than streamed: a Web stream per request costs more than the evaluation.
    answered = await route.handler(req, params, await readBody(req, route.maxBodyBytes));
  } catch (error) {
    // The same problem details as withProblems gives the route handler.
    const problem = problemAnswer(error, req.url!.split("?", 1)[0]);
    status = problem.status;
    answered = problem;
  }
  const outgoing: Record<string, string | number> = { ...DIRECT_HEADERS, ...answered.headers };
  if (typeof answered.body === "string") {
    const bytes = Buffer.from(answered.body);
    outgoing["content-length"] = bytes.byteLength;
    res.writeHead(status, outgoing).end(bytes);
    return;
  }
  res.writeHead(status, outgoing);
  const reader = answered.body.getReader();
  try {
    for (let next = await reader.read(); !next.done; next = await reader.read()) {
      if (!res.write(next.value)) await new Promise<void>((resolve) => res.once("drain", resolve));
    }
    res.end();
  } catch (error) {
    res.destroy(error as Error);
  }
}
