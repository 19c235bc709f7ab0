import http from "node:http";
import type { AddressInfo } from "node:net";
import next from "next";
import { clientAddress, CLIENT_ADDRESS_HEADER } from "../lib/auth/address.ts";
import { getConfig } from "../lib/config/index.ts";
import { databaseReachable, warmPool } from "../lib/db/knex.ts";
import { releasedEvaluationTargets } from "../lib/db/versions.ts";
import { warmRateLimiter } from "../lib/api/rateLimit.ts";
import { warmComputePool, warmModelCache } from "../lib/registry/evaluate.ts";
import { serverComputePool } from "../lib/registry/serverPool.ts";
import { directRoute } from "./direct-routes.ts";
import { answerDatabaseUnreachable, isPageRequest } from "./unavailable-page.ts";

/** Released versions (the newest) run through every evaluation path before the server listens. */
const WARM_BEFORE_LISTENING = 3;

export interface AppServerOptions {
  /** The project folder holding the production build (.next). */
  dir: string;
  hostname: string;
  /** 0 for a free port. */
  port: number;
  quiet?: boolean;
  /** Start the worker pool for large batches at once (the production server) rather than on the first batch. */
  startComputePool?: boolean;
  /** Proxies trusted in front of the server (default TRUSTED_PROXY_HOPS; see lib/auth/address.ts). */
  trustedProxyHops?: number;
}

export interface RunningAppServer {
  server: http.Server;
  port: number;
  close: () => Promise<void>;
}

/**
 * The production server: Next.js for pages, sessions and every other route, with the token-authenticated evaluate
 * requests answered by their handler directly (server/direct-routes.ts). `npm start`, the load test and the
 * full-stack tests all serve through this one function.
 */
export async function startAppServer(options: AppServerOptions): Promise<RunningAppServer> {
  const app = next({ dev: false, dir: options.dir, hostname: options.hostname, port: options.port, quiet: options.quiet });
  await app.prepare();
  // instrumentation.ts warms the framework's copy of lib/; the direct path runs this server's own copy, whose
  // kernels, packed coefficients and code paths are made on first use. Before listening: the pool's first
  // connections (lib/db/knex.ts warmPool; a database that is down now does not stop the start), then every evaluation
  // path on the newest released versions (the decoded models are shared), so the first request after a restart costs
  // what any other does. The other released versions are decoded in the background by instrumentation.ts.
  const pool = await warmPool();
  if (!options.quiet && pool.opened < pool.wanted) console.error(`[stillpoint] database: ${pool.opened} of ${pool.wanted} connections opened at start`);
  warmRateLimiter();
  const log = options.quiet ? () => {} : console.log;
  const models = await warmModelCache(async () => (await releasedEvaluationTargets()).slice(0, WARM_BEFORE_LISTENING), log);
  // The worker pool for large batches starts in the background: its threads take seconds, and nothing but a batch
  // needs them (one that arrives first waits for the rest of the start).
  if (options.startComputePool) void warmComputePool(models, serverComputePool(), log);
  const handle = app.getRequestHandler();
  const trustedHops = options.trustedProxyHops ?? getConfig().trustedProxyHops;
  // A page reads the database from its first line (the session check); with the database unreachable it answers 503
  // with Retry-After and a page saying so, as the API does, rather than the framework's error page with a 500.
  const page = async (req: http.IncomingMessage, res: http.ServerResponse) => {
    if (await databaseReachable()) await handle(req, res);
    else answerDatabaseUnreachable(req, res);
  };
  const server = http.createServer((req, res) => {
    // Where the request came from, worked out here alone (lib/auth/address.ts); a client's own value is replaced.
    req.headers[CLIENT_ADDRESS_HEADER] = clientAddress(req.socket.remoteAddress, req.headers["x-forwarded-for"], trustedHops);
    const direct = directRoute(req);
    if (direct) void direct(req, res);
    else if (isPageRequest(req)) void page(req, res);
    else void handle(req, res);
  });
  // Keep-alive clients (budget scripts, load generators) reuse their connections.
  server.keepAliveTimeout = 65_000;
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, options.hostname, () => resolve());
  });
  const { port } = server.address() as AddressInfo;
  return {
    server,
    port,
    close: async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve, reject) => server.close((error) => (error ? reject(error) : resolve())));
      await app.close();
    },
  };
}
