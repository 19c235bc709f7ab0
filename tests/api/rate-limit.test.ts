import { afterAll, describe, expect, it } from "vitest";
import { RateLimiterMemory, RateLimiterRedis } from "rate-limiter-flexible";
import { createEvaluationLimiter, evaluationCost, reservationBlock, type PointStore } from "@/lib/api/rateLimit";
import { RateLimitedError } from "@/lib/errors";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { queuePrefix, redisConnection } from "@/lib/queue/connection";

// The evaluation limit takes points from Redis a block at a time; these tests hold it to the plain rule: a token gets
// exactly `points` evaluation points a minute, the request that would pass the limit is refused with the wait.

afterAll(async () => {
  await closeQueueClients();
});

/** A store that counts its round trips. */
function counting(store: PointStore): PointStore & { calls: number } {
  const counted = {
    calls: 0,
    points: store.points,
    consume: (key: string, points: number) => (counted.calls++, store.consume(key, points)),
    reward: (key: string, points: number) => (counted.calls++, store.reward(key, points)),
  };
  return counted;
}

async function admitted(limit: (tokenId: number, wavefronts: number) => Promise<void>, tokenId: number, requests: number, wavefronts = 1): Promise<number> {
  let count = 0;
  for (let i = 0; i < requests; i++) {
    try {
      await limit(tokenId, wavefronts);
      count++;
    } catch (error) {
      if (!(error instanceof RateLimitedError)) throw error;
    }
  }
  return count;
}

describe("evaluation cost and reservation", () => {
  it("costs 1 point per request plus 1 per further 100 wavefronts, and reserves at most 1 % of the limit", () => {
    expect([1, 100, 101, 10_000].map(evaluationCost)).toEqual([1, 1, 2, 100]);
    expect([1, 99, 100, 120_000].map(reservationBlock)).toEqual([1, 1, 1, 1_200]);
  });
});

describe("createEvaluationLimiter", () => {
  it("admits exactly the limit of a small limit, one point at a time", async () => {
    const store = new RateLimiterMemory({ points: 30, duration: 60 });
    const limit = createEvaluationLimiter(() => store);
    expect(await admitted(limit, 1, 45)).toBe(30);
  });

  it("admits exactly the limit of a large one with about one store round trip per block", async () => {
    const store = counting(new RateLimiterMemory({ points: 5_000, duration: 60 }));
    const limit = createEvaluationLimiter(() => store);
    expect(await admitted(limit, 2, 5_200)).toBe(5_000);
    // 5,000 points in blocks of 50: 100 round trips to take them, then one per refused request.
    expect(store.calls).toBeLessThan(100 + 200 + 5);
  });

  it("lets the last request through when only its own points fit (the block overshoot is given back)", async () => {
    const store = new RateLimiterMemory({ points: 1_000, duration: 60 });
    await store.consume("token:3", 995);
    const limit = createEvaluationLimiter(() => store);
    // 5 points left, the block is 10: the request of 3 points fits, the next one of 3 does not.
    await limit(3, 300);
    await expect(limit(3, 300)).rejects.toBeInstanceOf(RateLimitedError);
    expect((await store.get("token:3"))!.consumedPoints).toBeGreaterThanOrEqual(998);
  });

  it("shares one limit between processes through Redis, and says how long to wait", async () => {
    const points = 2_000;
    const key = `${queuePrefix()}:rate:test-${process.pid}-${Date.now()}`;
    const client = redisConnection("client");
    if (client.status !== "ready") await new Promise((resolve) => client.once("ready", resolve));
    const redisStore = new RateLimiterRedis({ storeClient: client, keyPrefix: key, points, duration: 60 });
    // Two servers, each with its own reservations, on the same Redis counter.
    const first = createEvaluationLimiter(() => redisStore);
    const second = createEvaluationLimiter(() => redisStore);
    let admittedTotal = 0;
    for (let i = 0; i < 1_100; i++) admittedTotal += (await admitted(first, 4, 1)) + (await admitted(second, 4, 1));
    expect(admittedTotal).toBeLessThanOrEqual(points);
    // Each server loses at most one unused block at the edge.
    expect(admittedTotal).toBeGreaterThanOrEqual(points - 2 * reservationBlock(points));
    const refusal = await first(4, 1).catch((error: unknown) => error);
    expect(refusal).toBeInstanceOf(RateLimitedError);
    expect((refusal as RateLimitedError).retryAfterSeconds).toBeGreaterThan(0);
    expect((refusal as RateLimitedError).retryAfterSeconds).toBeLessThanOrEqual(60);
  });
});
