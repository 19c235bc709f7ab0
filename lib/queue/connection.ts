import { Redis, type RedisOptions } from "ioredis";
import { getConfig } from "../config/index.ts";

/** The queue that carries training, pruning and Monte Carlo work. */
export const WORK_QUEUE = "work";

/**
 * A Redis connection for BullMQ. Workers wait for Redis to come back (`maxRetriesPerRequest: null`, as BullMQ
 * requires); the web server fails fast instead, so that a request answers 503 rather than hanging.
 */
export function redisConnection(role: "worker" | "client"): Redis {
  const options: RedisOptions =
    role === "worker"
      ? { maxRetriesPerRequest: null, enableReadyCheck: true }
      : { maxRetriesPerRequest: 1, enableOfflineQueue: false, connectTimeout: 2000, retryStrategy: (times) => Math.min(times * 200, 2000) };
  const connection = new Redis(getConfig().redisUrl, options);
  // Connection errors surface on the commands that fail; an unhandled 'error' event would crash the process.
  connection.on("error", () => {});
  return connection;
}

export function queuePrefix(): string {
  return getConfig().queue.prefix;
}
