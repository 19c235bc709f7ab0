import type { IncomingMessage, ServerResponse } from "node:http";
import { MAX_JSON_BYTES } from "../lib/api/request.ts";
import { API_CONTENT_SECURITY_POLICY, STATIC_SECURITY_HEADERS } from "../lib/api/securityHeaders.ts";
import { POST as evaluate } from "../app/api/v1/models/[slug]/versions/[version]/evaluate/route.ts";

type RouteHandler = (request: Request, context: { params: Promise<Record<string, string>> }) => Promise<Response>;

interface DirectRoute {
  method: string;
  pattern: RegExp;
  names: string[];
  handler: RouteHandler;
  /** Bytes of body read before the handler sees it (one more tells the handler the body is too large). */
  maxBodyBytes: number;
}

/**
 * Routes a token-carrying client calls at high rates, answered by their route handler without the framework's
 * request pipeline (which costs a few milliseconds of CPU per request: the evaluate API's single-offset requests
 * would spend most of their time there). Only requests with an `Authorization` header take this path: they need
 * no session cookie, page rendering or redirect, and the handler does every check itself. Everything else, and
 * every browser request, goes through Next.js as usual.
 */
const DIRECT_ROUTES: DirectRoute[] = [
  {
    method: "POST",
    pattern: /^\/api\/v1\/models\/([^/]+)\/versions\/([^/]+)\/evaluate\/?$/,
    names: ["slug", "version"],
    handler: evaluate as RouteHandler,
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
  let response: Response;
  try {
    const headers = new Headers();
    for (const [name, value] of Object.entries(req.headers)) {
      if (value === undefined) continue;
      if (Array.isArray(value)) value.forEach((v) => headers.append(name, v));
      else headers.set(name, value);
    }
    // Read whole (bounded) rather than streamed: a Web stream per request costs more than the evaluation.
    const body = await readBody(req, route.maxBodyBytes);
    const request = new Request(`http://${req.headers.host ?? "localhost"}${req.url}`, {
      method: req.method,
      headers,
      body: new Uint8Array(body.buffer as ArrayBuffer, body.byteOffset, body.byteLength),
    });
    response = await route.handler(request, { params: Promise.resolve(params) });
  } catch (error) {
    // The handlers map every error to a problem themselves; this is the last guard (a client that went away).
    console.error(`[stillpoint] direct route failed: ${(error as Error).message}`);
    response = new Response(JSON.stringify({ type: "about:blank", title: "Internal Server Error", status: 500 }), {
      status: 500,
      headers: { "content-type": "application/problem+json" },
    });
  }
  const outgoing: Record<string, string | number> = { ...DIRECT_HEADERS };
  response.headers.forEach((value, name) => (outgoing[name] = value));
  if (response.body === null) {
    res.writeHead(response.status, outgoing).end();
    return;
  }
  const reader = response.body.getReader();
  try {
    // An answer made from one string arrives as one chunk: send it with its length in one write.
    const first = await reader.read();
    const second = first.done ? first : await reader.read();
    if (second.done) {
      const whole = first.value ?? new Uint8Array(0);
      outgoing["content-length"] = whole.byteLength;
      res.writeHead(response.status, outgoing).end(whole);
      return;
    }
    res.writeHead(response.status, outgoing);
    res.write(first.value);
    let next: ReadableStreamReadResult<Uint8Array> = second;
    while (!next.done) {
      if (!res.write(next.value)) await new Promise<void>((resolve) => res.once("drain", resolve));
      next = await reader.read();
    }
    res.end();
  } catch (error) {
    res.destroy(error as Error);
  }
}
