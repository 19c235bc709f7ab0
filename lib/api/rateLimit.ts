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
      // Counted in memory once the limit is passed by more than one reservation block (a block that overshoots is
      // given back), so a client hammering past it costs Redis nothing.
      inMemoryBlockOnConsumed: points + reservationBlock(points),
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

/** Points one process takes from Redis at a time for a token: at most 1 % of the limit, so a small limit stays exact. */
export function reservationBlock(pointsPerMinute: number): number {
  return Math.max(1, Math.floor(pointsPerMinute / 100));
}

/** The part of rate-limiter-flexible's limiter that {@link createEvaluationLimiter} uses. */
export interface PointStore {
  points: number;
  consume(key: string, points: number): Promise<RateLimiterRes>;
  reward(key: string, points: number): Promise<RateLimiterRes>;
}

/**
 * Per-token evaluation limits that cost a Redis round trip only about once per `reservationBlock` points: a request
 * takes its points from what this process already reserved for the token, and reserves the next block (counted in
 * Redis at once, like any consumption) when that runs out. Across processes the limit holds exactly; points a process
 * reserved and did not use before the window ends are lost (at most 1 % of the limit per process and minute).
 * At the limit's edge a block that overshoots is given back and the request's own points decide.
 */
export function createEvaluationLimiter(store: () => PointStore) {
  const reservations = new Map<string, { points: number; expiresAt: number }>();
  return async function limit(tokenId: number, wavefronts: number, now = Date.now()): Promise<void> {
    const cost = evaluationCost(wavefronts);
    const key = `token:${tokenId}`;
    const held = reservations.get(key);
    if (held && held.expiresAt > now && held.points >= cost) {
      held.points -= cost;
      return;
    }
    const limiterStore = store();
    const take = Math.max(cost, reservationBlock(limiterStore.points));
    try {
      const granted = await limiterStore.consume(key, take);
      reservations.set(key, { points: take - cost, expiresAt: now + granted.msBeforeNext });
      if (reservations.size > 10_000) reservations.clear();
    } catch (rejection) {
      if (!(rejection instanceof RateLimiterRes)) throw rejection;
      reservations.delete(key);
      // The block overshot but the request's own points fit: give the rest back and let it through.
      if (take > cost && rejection.consumedPoints - take + cost <= limiterStore.points) {
        await limiterStore.reward(key, take - cost);
        return;
      }
      throw new RateLimitedError(
        `This token may make ${limiterStore.points} evaluation points a minute; retry in ${Math.ceil(rejection.msBeforeNext / 1000)} s.`,
        rejection.msBeforeNext / 1000,
      );
    }
  };
}

const limitHolder = globalThis as typeof globalThis & { __stillpointEvaluationLimit?: ReturnType<typeof createEvaluationLimiter> };

/**
 * Count an evaluation against the token's per-minute limit (sessions are not limited here).
 * @throws {RateLimitedError} with the seconds until the limit allows the request
 */
export async function limitEvaluation(actor: Actor, wavefronts: number): Promise<void> {
  if (actor.tokenId === null) return;
  limitHolder.__stillpointEvaluationLimit ??= createEvaluationLimiter(limiter);
  await limitHolder.__stillpointEvaluationLimit(actor.tokenId, wavefronts);
}

/** Open the limiter's Redis connection ahead of the first request (server start-up). */
export function warmRateLimiter(): void {
  limiter();
}
