import type { IncomingMessage, ServerResponse } from "node:http";
import { Readable } from "node:stream";
import { POST as evaluate } from "../app/api/v1/models/[slug]/versions/[version]/evaluate/route.ts";

type RouteHandler = (request: Request, context: { params: Promise<Record<string, string>> }) => Promise<Response>;

interface DirectRoute {
  method: string;
  pattern: RegExp;
  names: string[];
  handler: RouteHandler;
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
  },
];

/** Headers every direct answer carries (the framework's own answers get theirs from next.config.mjs). */
const DIRECT_HEADERS = { "x-content-type-options": "nosniff" };

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
    return (incoming, res) => answer(route.handler, params, incoming, res);
  }
  return null;
}

async function answer(handler: RouteHandler, params: Record<string, string>, req: IncomingMessage, res: ServerResponse): Promise<void> {
  const headers = new Headers();
  for (const [name, value] of Object.entries(req.headers)) {
    if (value === undefined) continue;
    if (Array.isArray(value)) value.forEach((v) => headers.append(name, v));
    else headers.set(name, value);
  }
  const request = new Request(`http://${req.headers.host ?? "localhost"}${req.url}`, {
    method: req.method,
    headers,
    body: Readable.toWeb(req) as ReadableStream<Uint8Array>,
    duplex: "half",
  } as RequestInit);
  let response: Response;
  try {
    response = await handler(request, { params: Promise.resolve(params) });
  } catch (error) {
    // The handlers map every error to a problem themselves; this is the last guard.
    console.error(`[stillpoint] direct route failed: ${(error as Error).message}`);
    response = new Response(JSON.stringify({ type: "about:blank", title: "Internal Server Error", status: 500 }), {
      status: 500,
      headers: { "content-type": "application/problem+json" },
    });
  }
  const outgoing: Record<string, string> = { ...DIRECT_HEADERS };
  response.headers.forEach((value, name) => (outgoing[name] = value));
  if (response.body === null) {
    res.writeHead(response.status, outgoing).end();
    return;
  }
  res.writeHead(response.status, outgoing);
  const reader = response.body.getReader();
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      if (!res.write(value)) await new Promise<void>((resolve) => res.once("drain", resolve));
    }
    res.end();
  } catch (error) {
    res.destroy(error as Error);
  }
}
