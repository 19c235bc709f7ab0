// An open-loop load generator: requests leave on a fixed schedule (request k at k / rate seconds), whatever the
// server does, over a bounded set of keep-alive connections, and each latency runs from the request's scheduled time
// to the end of its answer. A slow answer therefore counts for every request that had to wait behind it (no
// coordinated omission: G. Tene, "How NOT to measure latency", 2015; from memory).
//
// Why not autocannon's `overallRate`: autocannon lets each connection send its share of a second's requests back to
// back from the start of each second and then pause, so 1,000 req/s over 50 connections arrive as one burst per
// second; and it corrects coordinated omission with an expected interval of ceil(1 / rate) ms, i.e. 1 ms at 20 req/s
// per connection, which adds a synthetic sample per millisecond of every answer slower than that. Both inflate the
// tail far beyond what evenly paced clients see. Closed-loop capacity is still measured with autocannon.
import http from "node:http";

export interface OpenLoopOptions {
  url: string;
  method?: string;
  headers: Record<string, string>;
  body: string;
  /** Requests per second offered. */
  rate: number;
  /** Keep-alive connections the requests share (a request waits for a free one, and the wait counts). */
  connections: number;
  seconds: number;
}

export interface OpenLoopResult {
  offered: number;
  completed: number;
  non2xx: number;
  errors: number;
  /** Answers per second over the run. */
  servedPerSecond: number;
  latencyMs: { p50: number; p90: number; p99: number; max: number };
}

/** The q-quantile of sorted values (nearest rank). */
function quantile(sorted: Float64Array, q: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))];
}

export async function openLoop(options: OpenLoopOptions): Promise<OpenLoopResult> {
  const target = new URL(options.url);
  const agent = new http.Agent({ keepAlive: true, maxSockets: options.connections, maxFreeSockets: options.connections });
  const body = Buffer.from(options.body);
  const headers = { ...options.headers, "content-length": String(body.length) };
  const total = Math.round(options.rate * options.seconds);
  const latencies = new Float64Array(total);
  let completed = 0;
  let non2xx = 0;
  let errors = 0;
  let sent = 0;
  const began = performance.now();
  const intervalMs = 1000 / options.rate;

  const finished = new Promise<void>((resolve) => {
    const settle = () => {
      if (completed + errors === total) resolve();
    };
    const send = (scheduledAt: number) => {
      const request = http.request(
        { host: target.hostname, port: target.port, path: target.pathname + target.search, method: options.method ?? "POST", headers, agent },
        (response) => {
          if (response.statusCode === undefined || response.statusCode < 200 || response.statusCode >= 300) non2xx++;
          response.on("data", () => {});
          response.on("end", () => {
            latencies[completed++] = performance.now() - scheduledAt;
            settle();
          });
        },
      );
      request.on("error", () => {
        errors++;
        settle();
      });
      request.end(body);
    };
    // Every millisecond or so, send what the schedule says is due by now.
    const tick = () => {
      const due = Math.min(total, Math.floor((performance.now() - began) / intervalMs) + 1);
      while (sent < due) send(began + sent++ * intervalMs);
      if (sent < total) setTimeout(tick, 1);
    };
    tick();
  });
  await finished;
  const elapsedS = (performance.now() - began) / 1000;
  agent.destroy();
  const sorted = latencies.slice(0, completed).sort();
  return {
    offered: total,
    completed,
    non2xx,
    errors,
    servedPerSecond: completed / elapsedS,
    latencyMs: { p50: quantile(sorted, 0.5), p90: quantile(sorted, 0.9), p99: quantile(sorted, 0.99), max: quantile(sorted, 1) },
  };
}
