// npm run loadtest: the evaluate API under load, against the production build with real MariaDB and Redis and token
// authentication, on the demo released model (velora-transmit v2: 595 terms, 25 x 25 nodes). It starts what it
// needs (the test MariaDB and Redis instances, a throw-away database seeded with the demo, the production server of
// server/main.ts), prints a table of figures against the targets, and stops everything it started. Figures, not
// assertions: timings on a shared 2-core machine vary by tens of per cent from one minute to the next.
// Options: --next-start (serve with plain `next start` to compare), --cpu-prof DIR (a V8 CPU profile of the server).
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { readFileSync } from "node:fs";
import { createServer } from "node:net";
import { fileURLToPath } from "node:url";
import autocannon from "autocannon";
import { openLoop } from "./openLoop.ts";

const root = fileURLToPath(new URL("..", import.meta.url));
const dbPort = process.env.TEST_DATABASE_PORT ?? "3317";
const redisPort = process.env.TEST_REDIS_PORT ?? "6390";
const database = `stillpoint_loadtest_r${process.pid}`;
const env: NodeJS.ProcessEnv = {
  ...process.env,
  DATABASE_PORT: dbPort,
  DATABASE_NAME: database,
  REDIS_PORT: redisPort,
  REDIS_URL: `redis://127.0.0.1:${redisPort}`,
  QUEUE_PREFIX: `stillpoint-loadtest-r${process.pid}`,
  NEXTAUTH_SECRET: "loadtest-secret-".padEnd(40, "x"),
  AUTH_TRUST_HOST: "true",
  NEXT_TELEMETRY_DISABLED: "1",
  RATE_LIMIT_PER_MINUTE: "10000000",
};
delete env.NEXTAUTH_URL;

function run(command: string, args: string[], what: string): void {
  const result = spawnSync(command, args, { cwd: root, env, stdio: ["ignore", "ignore", "inherit"] });
  if (result.status !== 0) throw new Error(`${what} failed (exit ${result.status})`);
}

async function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const server = createServer();
    server.listen(0, "127.0.0.1", () => {
      const { port } = server.address() as { port: number };
      server.close(() => resolve(port));
    });
  });
}

const plainNext = process.argv.includes("--next-start");
// `--cpu-prof DIR`: the server writes a V8 CPU profile there when it stops (open it in Chrome's DevTools).
const profileIndex = process.argv.indexOf("--cpu-prof");
const profileArgs = profileIndex > 0 ? ["--cpu-prof", `--cpu-prof-dir=${process.argv[profileIndex + 1]}`] : [];
let server: ChildProcess | null = null;
async function startServer(port: number): Promise<number> {
  const began = performance.now();
  // The production server of `npm start` (server/main.ts); `--next-start` measures plain `next start` for comparison.
  const command = plainNext
    ? [`${root}/node_modules/.bin/next`, "start", "-H", "127.0.0.1", "-p", String(port)]
    : [process.execPath, ...profileArgs, "--import", "tsx", `${root}/server/main.ts`, "-H", "127.0.0.1", "-p", String(port)];
  // The server's own lines (start-up, warm-up) go to stderr with the load test's progress.
  server = spawn(command[0], command.slice(1), { cwd: root, env, stdio: ["ignore", 2, "inherit"] });
  for (;;) {
    try {
      const response = await fetch(`http://127.0.0.1:${port}/api/v1/openapi.json`);
      if (response.ok) return performance.now() - began;
    } catch {
      // not listening yet
    }
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}
async function stopServer(): Promise<void> {
  if (!server || server.exitCode !== null) return;
  const done = new Promise((resolve) => server!.once("exit", resolve));
  server.kill("SIGTERM");
  await done;
}

function cleanup(): void {
  try {
    spawnSync("mariadb", ["--no-defaults", `--socket=${root}/.data/mariadb-test/mariadb.sock`, "-uroot", "-e", `DROP DATABASE IF EXISTS \`${database}\``]);
  } catch {
    // best effort
  }
}

/** CPU seconds the server process has used so far (all its threads: user + system, from /proc). */
function serverCpuSeconds(): number {
  if (!server?.pid) return Number.NaN;
  try {
    const fields = readFileSync(`/proc/${server.pid}/stat`, "utf8").split(") ")[1].split(" ");
    return (Number(fields[11]) + Number(fields[12])) / 100; // utime and stime, in clock ticks of 1/100 s (USER_HZ)
  } catch {
    return Number.NaN;
  }
}

const rows: string[][] = [];
const fmt = (v: number, digits = 3) => Number(v.toPrecision(digits)).toString();
function report(name: string, figure: string, target: string, met: boolean): void {
  rows.push([name, figure, target, met ? "met" : "NOT met"]);
  console.error(`[loadtest] ${name}: ${figure} (target ${target}) ${met ? "met" : "NOT met"}`);
}

async function main(): Promise<void> {
  console.error("[loadtest] starting the test MariaDB and Redis, a fresh database with the demo model (about half a minute)");
  run("bash", ["db/mariadb.sh", "start", "test"], "starting MariaDB");
  run("bash", ["db/redis.sh", "start", "test"], "starting Redis");
  run("mariadb", ["--no-defaults", `--socket=${root}/.data/mariadb-test/mariadb.sock`, "-uroot", "-e", `DROP DATABASE IF EXISTS \`${database}\`; CREATE DATABASE \`${database}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci; GRANT ALL PRIVILEGES ON \`${database}%\`.* TO 'app'@'127.0.0.1';`], "creating the database");
  run("node", ["--import", "tsx", "node_modules/knex/bin/cli.js", "--knexfile", "knexfile.ts", "migrate:latest"], "migrating");
  run("node", ["--import", "tsx", "node_modules/knex/bin/cli.js", "--knexfile", "knexfile.ts", "seed:run"], "seeding");
  run("bash", ["-c", "source scripts/common.sh && build_if_needed"], "next build");

  // A token of the demo viewer with the evaluate scope, made through the registry's own function.
  Object.assign(process.env, env);
  const { sessionActor } = await import("../lib/access/actor.ts");
  const { db, closeDb } = await import("../lib/db/knex.ts");
  const { getUser } = await import("../lib/db/users.ts");
  const { createToken } = await import("../lib/db/tokens.ts");
  const row = await db()("users").where({ email: "viewer@velora.test" }).first();
  const viewer = sessionActor((await getUser(row.id))!);
  const { token } = await createToken(viewer, { name: "loadtest", scopes: ["evaluate", "read"], expiresAt: null, models: null });
  await closeDb();

  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const url = `${base}/api/v1/models/velora-transmit/versions/2/evaluate`;
  const headers = { authorization: `Bearer ${token}`, "content-type": "application/json" };
  const wavefront = (i: number) => ({ ordering: "noll", coefficientsNm: { "4": 3 + (i % 5), "5": -2, "6": 1.5, "11": (i % 3) - 1, "22": 0.5 } });
  const single = JSON.stringify({ wavefronts: [wavefront(1)], output: "offsets", offsetsNrad: [[-12.5, 30]] });
  const full = JSON.stringify({ wavefronts: [wavefront(2)], output: "map" });
  const batch1000 = JSON.stringify({ wavefronts: Array.from({ length: 1000 }, (_, i) => wavefront(i)), output: "summary" });
  const batch10000 = JSON.stringify({ wavefronts: Array.from({ length: 10000 }, (_, i) => wavefront(i)), output: "summary" });

  const startupMs = await startServer(port);
  console.error(`[loadtest] ${plainNext ? "next start" : "server/main.ts"} answering after ${fmt(startupMs)} ms`);
  const t0 = performance.now();
  const first = await fetch(url, { method: "POST", headers, body: single });
  await first.arrayBuffer();
  const firstMs = performance.now() - t0;
  if (first.status !== 200) throw new Error(`first evaluation answered ${first.status}`);
  report("first request after a restart", `${fmt(firstMs)} ms`, "< 300 ms", firstMs < 300);

  const cannon = (body: string, connections: number, seconds: number) =>
    autocannon({ url, method: "POST", headers, body, connections, duration: seconds, pipelining: 1 });
  await cannon(single, 10, 2); // warm-up
  // Closed loop: 50 connections, each sending its next request as soon as the answer arrives; measures capacity.
  // Its latency is queueing by construction (mean = 50 / throughput), so the latency target is measured open loop
  // (bench/openLoop.ts): 1,000 requests/s leaving on an even schedule over the same 50 connections, as 50 clients at
  // 20 requests/s each would send them, each latency counted from the request's scheduled time.
  const cpuBefore = serverCpuSeconds();
  const offsets = await cannon(single, 50, 10);
  const cpuPerRequestMs = ((serverCpuSeconds() - cpuBefore) * 1000) / offsets.requests.total;
  if (offsets.non2xx > 0) console.error(`[loadtest] ${offsets.non2xx} non-2xx answers in the single-offset run`);
  report(
    "single offset, 50 connections flat out: throughput",
    `${fmt(offsets.requests.average)} req/s (p99 ${fmt(offsets.latency.p99)} ms; server CPU ${fmt(cpuPerRequestMs, 2)} ms per request)`,
    ">= 1000 req/s",
    offsets.requests.average >= 1000,
  );
  const paced = await openLoop({ url, headers, body: single, rate: 1000, connections: 50, seconds: 10 });
  if (paced.non2xx + paced.errors > 0) console.error(`[loadtest] ${paced.non2xx} non-2xx answers and ${paced.errors} errors in the paced single-offset run`);
  report(
    "single offset, 1,000 req/s offered evenly over 50 connections: p99 latency",
    `${fmt(paced.latencyMs.p99)} ms (p50 ${fmt(paced.latencyMs.p50)}, p90 ${fmt(paced.latencyMs.p90)}, max ${fmt(paced.latencyMs.max)} ms; ${fmt(paced.servedPerSecond)} req/s served)`,
    "< 25 ms",
    paced.latencyMs.p99 < 25 && paced.servedPerSecond >= 950 && paced.non2xx + paced.errors === 0,
  );

  const maps = await cannon(full, 1, 5);
  report("full map (595 terms, 25 x 25): p50 latency", `${fmt(maps.latency.p50)} ms`, "< 10 ms", maps.latency.p50 < 10);

  const times: number[] = [];
  for (let i = 0; i < 5; i++) {
    const t = performance.now();
    const response = await fetch(url, { method: "POST", headers, body: batch1000 });
    await response.arrayBuffer();
    times.push(performance.now() - t);
  }
  const first1000 = times[0];
  const best1000 = Math.min(...times);
  report(
    "1,000 wavefronts as summary",
    `${fmt(best1000)} ms best of 5 (median ${fmt([...times].sort((a, b) => a - b)[2])}, first ${fmt(first1000)})`,
    "< 1000 ms",
    first1000 < 1000 && best1000 < 1000,
  );

  // Single-offset requests, one at a time, while a 10,000-wavefront request runs beside them.
  const alone: number[] = [];
  for (let i = 0; i < 50; i++) {
    const t = performance.now();
    await (await fetch(url, { method: "POST", headers, body: single })).arrayBuffer();
    alone.push(performance.now() - t);
  }
  const beside: number[] = [];
  const bigStart = performance.now();
  let bigMs = 0;
  const big = fetch(url, { method: "POST", headers, body: batch10000 }).then(async (r) => {
    await r.arrayBuffer();
    bigMs = performance.now() - bigStart;
  });
  let bigDone = false;
  void big.then(() => (bigDone = true));
  while (!bigDone) {
    const t = performance.now();
    await (await fetch(url, { method: "POST", headers, body: single })).arrayBuffer();
    beside.push(performance.now() - t);
  }
  await big;
  const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
  const worstBeside = Math.max(...beside);
  report(
    "single offset beside a 10,000-wavefront request: worst added delay",
    `${fmt(worstBeside - median(alone))} ms (worst ${fmt(worstBeside)} ms, ${beside.length} requests during the ${fmt(bigMs)} ms batch; alone median ${fmt(median(alone))} ms)`,
    "<= 50 ms",
    worstBeside - median(alone) <= 50,
  );

  await stopServer();
  const width = [0, 1, 2, 3].map((c) => Math.max(...rows.map((r) => r[c].length), ["figure", "value", "target", "result"][c].length));
  const line = (r: string[]) => r.map((cell, c) => cell.padEnd(width[c])).join("  ");
  console.log(line(["figure", "value", "target", "result"]));
  for (const r of rows) console.log(line(r));
}

main()
  .catch((error) => {
    console.error(`[loadtest] ${(error as Error).message}`);
    process.exitCode = 1;
  })
  .finally(async () => {
    await stopServer();
    cleanup();
  });
