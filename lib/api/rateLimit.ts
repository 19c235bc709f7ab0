import { RateLimiterMemory, RateLimiterRedis, RateLimiterRes } from "rate-limiter-flexible";
import type { Actor } from "../access/actor.ts";
import { getConfig } from "../config/index.ts";
import { RateLimitedError } from "../errors.ts";
import { queuePrefix, redisConnection } from "../queue/connection.ts";

const holder = globalThis as typeof globalThis & { __stillpointLimiter?: RateLimiterRedis };

function limiter(): RateLimiterRedis {
  if (!holder.__stillpointLimiter) {
    const points = getConfig().rateLimitPerMinute;
    holder.__stillpointLimiter = new RateLimiterRedis({
      storeClient: redisConnection("client"),
      keyPrefix: `${queuePrefix()}:rate:evaluate`,
      points,
      duration: 60,
      // Counted in memory once the limit is reached, so a client hammering past it costs Redis nothing.
      inMemoryBlockOnConsumed: points,
      // Redis down: count per process instead of refusing service.
      insuranceLimiter: new RateLimiterMemory({ points, duration: 60 }),
    });
  }
  return holder.__stillpointLimiter;
}

/** Points a request costs: 1, plus 1 for every further 100 wavefronts. */
export function evaluationCost(wavefronts: number): number {
  return 1 + Math.floor(Math.max(0, wavefronts - 1) / 100);
}

/**
 * Count an evaluation against the token's per-minute limit (sessions are not limited here).
 * @throws {RateLimitedError} with the seconds until the limit allows the request
 */
export async function limitEvaluation(actor: Actor, wavefronts: number): Promise<void> {
  if (actor.tokenId === null) return;
  try {
    await limiter().consume(`token:${actor.tokenId}`, evaluationCost(wavefronts));
  } catch (rejection) {
    if (rejection instanceof RateLimiterRes) {
      throw new RateLimitedError(
        `This token may make ${getConfig().rateLimitPerMinute} evaluation points a minute; retry in ${Math.ceil(rejection.msBeforeNext / 1000)} s.`,
        rejection.msBeforeNext / 1000,
      );
    }
    throw rejection;
  }
}

/** Open the limiter's Redis connection ahead of the first request (server start-up). */
export function warmRateLimiter(): void {
  limiter();
}
