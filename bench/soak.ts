// npm run soak: mixed traffic against the production build on loopback while the fault steps of the reliability
// issue happen, then a report. Bounded: SOAK_SECONDS of traffic (default 180) and at most SOAK_MAX_REQUESTS requests
// (default 40,000), then at most 120 s for the runs in flight to end; it stops everything it started by itself.
//
// It starts its own MariaDB and Redis instances ("soak", ports SOAK_DATABASE_PORT / SOAK_REDIS_PORT, default 3424 /
// 6424) because it stops and restarts them, a fresh database seeded with the demo, the production server of
// `npm start` (server/main.ts, on SOAK_PORT, default 3124; building when stale) and two `stillpoint worker` processes.
// Before the traffic starts, one request of each kind warms the server (reported apart from the traffic).
//
// Traffic: evaluations by three tokens (offsets, summaries, full maps), page loads by a signed-in viewer, a training
// run every few seconds through a modeller's token (always the same spec, so every run that succeeds must store the
// same coefficients), uploads of generating sets good and bad (truncated, not a zip, NaN-filled, wrong grid).
// Faults: MariaDB stopped and started again; Redis restarted while a run is in flight; a worker killed with SIGKILL
// mid-run and replaced. Each outage is an announced window (from the stop until RECOVERY_SECONDS after the start);
// a request is inside a window when the time it was in flight overlaps it (one sent just before the stop and
// answered during the outage is the outage's).
//
// Report: requests served, answers by kind and status, errors by kind and by 10 s window (inside or outside an
// outage), latency percentiles, answers slower than 5 s, runs started and how they ended, and a check of every
// stored checksum against its blob. Exit status 1 when any 5xx falls outside an outage window, a 503 lacks
// Retry-After, an answer took more than 5 s during an outage, a run was left unfinished or a version's blob fails
// its checksum or two successful runs of the one spec stored different coefficients.
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { mkdirSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const root = fileURLToPath(new URL("..", import.meta.url));
const SECONDS = Number(process.env.SOAK_SECONDS ?? 180);
const MAX_REQUESTS = Number(process.env.SOAK_MAX_REQUESTS ?? 40_000);
const RECOVERY_SECONDS = 10;
const SLOW_MS = 5_000;
const dbPort = process.env.SOAK_DATABASE_PORT ?? "3424";
const redisPort = process.env.SOAK_REDIS_PORT ?? "6424";
const webPort = process.env.SOAK_PORT ?? "3124";
const database = "stillpoint_soak";
const base = `http://127.0.0.1:${webPort}`;
const env: NodeJS.ProcessEnv = {
  ...process.env,
  DATABASE_PORT: dbPort,
  DATABASE_NAME: database,
  REDIS_PORT: redisPort,
  REDIS_URL: `redis://127.0.0.1:${redisPort}`,
  QUEUE_PREFIX: "stillpoint-soak",
  NEXTAUTH_SECRET: "soak-secret-".padEnd(40, "x"),
  AUTH_TRUST_HOST: "true",
  NEXT_TELEMETRY_DISABLED: "1",
  RATE_LIMIT_PER_MINUTE: "10000000",
  // A killed worker's chunk goes to the other worker after 5 s.
  WORKER_LOCK_MS: "5000",
  WORKER_THREADS: "1",
  SERVER_COMPUTE_THREADS: "1",
  // Nothing listens there: mail the soak causes waits in its queue (the soak is not about mail).
  SMTP_PORT: process.env.SOAK_SMTP_PORT ?? "2424",
};
delete env.NEXTAUTH_URL;
if (!/^(127\.0\.0\.1|localhost)$/.test(new URL(base).hostname)) throw new Error("the soak runs on loopback only");

const log = (message: string) => console.error(`[soak ${elapsed().toFixed(1).padStart(6)} s] ${message}`);
let t0 = performance.now();
const elapsed = () => (performance.now() - t0) / 1000;

function sh(command: string, args: string[], what: string): void {
  const result = spawnSync(command, args, { cwd: root, env, stdio: ["ignore", "ignore", "inherit"] });
  if (result.status !== 0) throw new Error(`${what} failed (exit ${result.status})`);
}
/** The same without blocking the event loop (the traffic keeps going, and its timings stay true, while a fault runs). */
function shAsync(command: string, args: string[], what: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { cwd: root, env, stdio: ["ignore", "ignore", "inherit"] });
    child.once("error", reject);
    child.once("exit", (code) => (code === 0 ? resolve() : reject(new Error(`${what} failed (exit ${code})`))));
  });
}
const rootSql = (sql: string) => sh("mariadb", ["--no-defaults", `--socket=${root}/.data/mariadb-soak/mariadb.sock`, "-uroot", "-e", sql], "SQL as root");

// ---- processes ----

const children = new Set<ChildProcess>();
function startChild(name: string, command: string, args: string[]): ChildProcess {
  const child = spawn(command, args, { cwd: root, env, stdio: ["ignore", "ignore", "pipe"] });
  child.stderr!.on("data", (chunk: Buffer) => {
    for (const line of chunk.toString().split("\n")) if (/error|fail|⨯/i.test(line) && line.trim()) serverLines.push(`${name}: ${line.trim().slice(0, 300)}`);
  });
  children.add(child);
  child.once("exit", () => children.delete(child));
  return child;
}
const serverLines: string[] = [];
async function stopChild(child: ChildProcess, signal: NodeJS.Signals = "SIGTERM"): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return;
  const done = new Promise((resolve) => child.once("exit", resolve));
  child.kill(signal);
  await Promise.race([done, new Promise((resolve) => setTimeout(resolve, 15_000))]);
  if (child.exitCode === null && child.signalCode === null) child.kill("SIGKILL");
}
const workers: ChildProcess[] = [];
const startWorkerProcess = (n: number) => {
  const child = startChild(`worker-${n}`, process.execPath, ["bin/stillpoint.mjs", "worker", "--threads", "1"]);
  workers.push(child);
  return child;
};

// ---- recording ----

type Kind = "evaluate" | "page" | "train" | "upload-good" | "upload-bad" | "run-poll";
interface Sample {
  t: number;
  kind: Kind;
  status: number; // 0: no answer (connection refused, reset, timeout)
  ms: number;
  error?: string;
  retryAfter: boolean;
}
const samples: Sample[] = [];
interface Window {
  name: string;
  from: number;
  to: number;
}
const windows: Window[] = [];
/** Whether a request was in flight at some moment of an outage window (sent before its end, answered after its start). */
const inWindow = (s: Sample) => windows.some((w) => s.t <= w.to && s.t + s.ms / 1000 >= w.from);
let stopTraffic = false;

async function timed(kind: Kind, url: string, init: RequestInit = {}): Promise<{ status: number; body: string; headers: Headers | null }> {
  const t = elapsed();
  const started = performance.now();
  try {
    const response = await fetch(url, { ...init, redirect: "manual", signal: AbortSignal.timeout(15_000) });
    const body = await response.text();
    samples.push({ t, kind, status: response.status, ms: performance.now() - started, retryAfter: response.headers.has("retry-after") });
    return { status: response.status, body, headers: response.headers };
  } catch (error) {
    const name = (error as Error).name === "TimeoutError" ? "timeout" : ((error as { cause?: { code?: string } }).cause?.code ?? (error as Error).name);
    samples.push({ t, kind, status: 0, ms: performance.now() - started, error: name, retryAfter: false });
    return { status: 0, body: "", headers: null };
  }
}

// ---- traffic ----

const wavefront = (i: number) => ({ ordering: "noll", coefficientsNm: { "4": 2 + (i % 7), "5": -2, "6": 1.5, "11": (i % 3) - 1 } });
const evaluateBodies = [
  JSON.stringify({ wavefronts: [wavefront(1)], output: "offsets", offsetsNrad: [[-12.5, 30]] }),
  JSON.stringify({ wavefronts: Array.from({ length: 50 }, (_, i) => wavefront(i)), output: "summary", jitterNrad: 8 }),
  JSON.stringify({ wavefronts: [wavefront(3)], output: "map" }),
];

async function evaluateLoop(token: string, n: number): Promise<void> {
  let i = n;
  while (!stopTraffic && samples.length < MAX_REQUESTS) {
    await timed("evaluate", `${base}/api/v1/models/velora-transmit/versions/2/evaluate`, {
      method: "POST",
      headers: { authorization: `Bearer ${token}`, "content-type": "application/json" },
      body: evaluateBodies[i++ % evaluateBodies.length],
    });
    // A short pause: the point is mixed traffic through the faults, not the most requests a second.
    await new Promise((resolve) => setTimeout(resolve, 5));
  }
}

async function pageLoop(cookie: string): Promise<void> {
  const paths = ["/", "/models/velora-transmit", "/models/velora-transmit/versions/2", "/tokens", "/setups"];
  let i = 0;
  while (!stopTraffic && samples.length < MAX_REQUESTS) {
    await timed("page", `${base}${paths[i++ % paths.length]}`, { headers: { cookie } });
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

interface RunRecord {
  id: number;
  startedAt: number;
}
const runs: RunRecord[] = [];
const refusedTrainings: { t: number; status: number; detail: string }[] = [];
let trainSlug = "";
const TRAINING_SPEC = JSON.stringify({ order: 2, generatingSet: { design: "random", size: 1200, maxRmsNm: 10, seed: 5 }, validationSet: null });

async function startTraining(token: string): Promise<void> {
  const answer = await timed("train", `${base}/api/v1/models/${trainSlug}/versions`, {
    method: "POST",
    headers: { authorization: `Bearer ${token}`, "content-type": "application/json" },
    body: TRAINING_SPEC,
  });
  if (answer.status === 202) runs.push({ id: (JSON.parse(answer.body) as { run: { id: number } }).run.id, startedAt: elapsed() });
  else refusedTrainings.push({ t: elapsed(), status: answer.status, detail: answer.body.slice(0, 200) });
}

async function trainingLoop(token: string): Promise<void> {
  while (!stopTraffic) {
    await startTraining(token);
    for (let i = 0; i < 80 && !stopTraffic; i++) await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

async function uploadLoop(token: string, files: { good: Uint8Array; bad: Record<string, Uint8Array> }): Promise<void> {
  const bad = Object.entries(files.bad);
  let i = 0;
  while (!stopTraffic && samples.length < MAX_REQUESTS) {
    const good = i % (bad.length + 1) === 0;
    const [name, bytes] = good ? ["good", files.good] : bad[(i % (bad.length + 1)) - 1]!;
    const form = new FormData();
    form.set("file", new Blob([bytes as BlobPart]), `${name}.npz`);
    const answer = await timed(good ? "upload-good" : "upload-bad", `${base}/api/v1/models/${trainSlug}/generating-sets`, {
      method: "POST",
      headers: { authorization: `Bearer ${token}` },
      body: form,
    });
    if (!good && answer.status >= 200 && answer.status < 300) badAccepted.push(name);
    i++;
    await new Promise((resolve) => setTimeout(resolve, 700));
  }
}
const badAccepted: string[] = [];

// ---- faults ----

async function waitUntil(t: number): Promise<void> {
  while (elapsed() < t && !stopTraffic) await new Promise((resolve) => setTimeout(resolve, 100));
}

async function runInFlight(): Promise<number | null> {
  const { db } = await import("../lib/db/knex.ts");
  try {
    const row: { id: number } | undefined = await db()("runs").whereIn("state", ["running"]).where("progress_done", ">", 0).orderBy("id", "desc").first();
    return row?.id ?? null;
  } catch {
    return null;
  }
}

async function faults(modellerToken: string): Promise<void> {
  const at = (fraction: number) => SECONDS * fraction;
  await waitUntil(at(0.2));
  {
    const from = elapsed();
    log("fault: stopping MariaDB");
    await shAsync("bash", ["db/mariadb.sh", "stop", "soak"], "stopping MariaDB");
    await new Promise((resolve) => setTimeout(resolve, 12_000));
    log("fault: starting MariaDB again");
    await shAsync("bash", ["db/mariadb.sh", "start", "soak"], "starting MariaDB");
    windows.push({ name: "MariaDB stopped", from, to: elapsed() + RECOVERY_SECONDS });
  }
  await waitUntil(at(0.45));
  {
    await startTraining(modellerToken);
    for (let i = 0; i < 100 && (await runInFlight()) === null; i++) await new Promise((resolve) => setTimeout(resolve, 100));
    const run = await runInFlight();
    const from = elapsed();
    log(`fault: restarting Redis (run ${run ?? "none"} in flight)`);
    await shAsync("bash", ["db/redis.sh", "stop", "soak"], "stopping Redis");
    await new Promise((resolve) => setTimeout(resolve, 3_000));
    await shAsync("bash", ["db/redis.sh", "start", "soak"], "starting Redis");
    windows.push({ name: `Redis restarted (run ${run ?? "none"} in flight)`, from, to: elapsed() + RECOVERY_SECONDS });
    faultRuns.redis = run;
  }
  await waitUntil(at(0.7));
  {
    await startTraining(modellerToken);
    for (let i = 0; i < 100 && (await runInFlight()) === null; i++) await new Promise((resolve) => setTimeout(resolve, 100));
    const run = await runInFlight();
    const victim = workers.find((w) => w.exitCode === null && w.signalCode === null);
    log(`fault: killing worker pid ${victim?.pid} with SIGKILL (run ${run ?? "none"} in flight), starting a replacement`);
    victim?.kill("SIGKILL");
    startWorkerProcess(workers.length + 1);
    faultRuns.worker = run;
  }
}
const faultRuns: { redis: number | null; worker: number | null } = { redis: null, worker: null };

// ---- report ----

function percentile(values: number[], p: number): number {
  if (values.length === 0) return NaN;
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))]!;
}
const f = (v: number) => (Number.isFinite(v) ? v.toFixed(v < 10 ? 1 : 0) : "-");

async function main(): Promise<void> {
  log(`setting up: MariaDB on ${dbPort}, Redis on ${redisPort}, a fresh demo database, the build, ${SECONDS} s of traffic`);
  sh("bash", ["db/mariadb.sh", "start", "soak"], "starting MariaDB");
  sh("bash", ["db/redis.sh", "start", "soak"], "starting Redis");
  rootSql(`DROP DATABASE IF EXISTS \`${database}\`; CREATE DATABASE \`${database}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`);
  // An empty queue: jobs left by an earlier soak would carry the same ids as this one's runs (run-<id>-...) and be
  // taken for them. The answer is checked: Redis answers an error (and redis-cli exits 0) while it loads its data.
  const flushed = spawnSync("redis-cli", ["-p", redisPort, "flushall"], { encoding: "utf8" });
  if (flushed.stdout.trim() !== "OK") throw new Error(`emptying the soak's Redis failed: ${(flushed.stdout + flushed.stderr).trim()}`);
  sh("node", ["--import", "tsx", "node_modules/knex/bin/cli.js", "--knexfile", "knexfile.ts", "migrate:latest"], "migrating");
  sh("node", ["--import", "tsx", "node_modules/knex/bin/cli.js", "--knexfile", "knexfile.ts", "seed:run"], "seeding");
  sh("bash", ["-c", "source scripts/common.sh && build_if_needed"], "next build");

  Object.assign(process.env, env);
  const { sessionActor } = await import("../lib/access/actor.ts");
  const { db, closeDb } = await import("../lib/db/knex.ts");
  const { getUser } = await import("../lib/db/users.ts");
  const { createToken } = await import("../lib/db/tokens.ts");
  const { createSetup } = await import("../lib/db/setups.ts");
  const { createModel } = await import("../lib/db/models.ts");
  const { verifyStoredVersions } = await import("../lib/ops/integrity.ts");
  const { writeNpy } = await import("../lib/formats/npy.ts");
  const { writeNpz } = await import("../lib/formats/npz.ts");
  const { thetaGridNrad } = await import("../lib/optics/setup.ts");
  const { runTtlTask } = await import("../lib/parallel/ttlTask.ts");
  const { randomDesign } = await import("../lib/surrogate/designs.ts");
  const actor = async (email: string) => sessionActor((await getUser((await db()("users").where({ email }).first()).id))!);

  const evaluators = await Promise.all(
    ["viewer@velora.test", "reviewer@velora.test", "admin@velora.test"].map(async (email) => (await createToken(await actor(email), { name: "soak", scopes: ["evaluate"], expiresAt: null, models: null })).token),
  );
  const modeller = await actor("modeller@velora.test");
  const modellerToken = (await createToken(modeller, { name: "soak", scopes: ["read", "train"], expiresAt: null, models: null })).token;
  const setup = { wavelengthNm: 1064, apertureDiameterM: 0.26, beamRadiusM: 0.115, distanceM: 2.2e9, farField: { halfAngleNrad: 60, pointsPerAxis: 15 }, pupilSamples: 128 };
  const zernike = { ordering: "noll" as const, indices: [4, 5, 6, 7, 8] };
  const createdSetup = await createSetup(modeller, { name: "soak setup", setup });
  trainSlug = (await createModel(modeller, { slug: "soak-model", name: "Soak model", setupId: createdSetup.id, zernike })).slug;

  // Uploads: one good generating set (exact maps of 40 random wavefronts) and four bad ones.
  const M = setup.farField.pointsPerAxis;
  const S = 40;
  const coefficients = randomDesign(5, { size: S, maxRmsNm: 10, seed: 3 });
  const maps = runTtlTask({ setup, nollIndices: zernike.indices, coefficientsNm: coefficients, count: S });
  const members = (x: ArrayLike<number>, theta: ArrayLike<number>) => ({
    noll_indices: writeNpy("<i4", [5], zernike.indices),
    theta_nrad: writeNpy("<f8", [M], theta),
    coefficients_nm: writeNpy("<f8", [S, 5], coefficients),
    ttl_x_pm_per_nrad: writeNpy("<f8", [S, M, M], x),
    ttl_y_pm_per_nrad: writeNpy("<f8", [S, M, M], maps.y),
  });
  const theta = thetaGridNrad(setup.farField);
  const good = writeNpz(members(maps.x, theta));
  const nan = Float64Array.from(maps.x);
  nan[17] = Number.NaN;
  const bad = {
    truncated: good.slice(0, Math.floor(good.length / 2)),
    "not-a-zip": new TextEncoder().encode("this is not a NumPy archive at all"),
    "nan-filled": writeNpz(members(nan, theta)),
    "wrong-grid": writeNpz(members(maps.x, Array.from(theta, (v) => v * 1.5))),
  };

  // The workers first (their compute pools start while the server does), then the server `npm start` runs.
  startWorkerProcess(1);
  startWorkerProcess(2);
  startChild("server", process.execPath, ["--import", "tsx", "server/main.ts", "-H", "127.0.0.1", "-p", webPort]);
  for (let i = 0; ; i++) {
    try {
      if ((await fetch(`${base}/api/v1/openapi.json`)).ok) break;
    } catch {
      // not yet
    }
    if (i > 600) throw new Error("the server did not answer within 60 s");
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  // A signed-in viewer for the page loads (next-auth's own endpoints, as the browser does).
  const csrfAnswer = await fetch(`${base}/api/auth/csrf`);
  const csrfCookie = (csrfAnswer.headers.getSetCookie?.() ?? []).map((c) => c.split(";")[0]).join("; ");
  const { csrfToken } = (await csrfAnswer.json()) as { csrfToken: string };
  const signInAnswer = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: csrfCookie },
    body: new URLSearchParams({ csrfToken, email: "viewer@velora.test", password: "velora-demo-2026", json: "true" }),
  });
  const sessionCookie = (signInAnswer.headers.getSetCookie?.() ?? []).map((c) => c.split(";")[0]).find((c) => c.startsWith("next-auth.session-token="));
  if (!sessionCookie) throw new Error(`signing in the viewer failed (${signInAnswer.status})`);

  // Warm-up: one request of each kind, one after the other, before the clock starts (recorded apart: the first
  // request of a route loads its code and the first evaluation of a model decodes it).
  await timed("page", `${base}/`, { headers: { cookie: sessionCookie } });
  for (const body of evaluateBodies) {
    await timed("evaluate", `${base}/api/v1/models/velora-transmit/versions/2/evaluate`, {
      method: "POST",
      headers: { authorization: `Bearer ${evaluators[0]}`, "content-type": "application/json" },
      body,
    });
  }
  const warmUpForm = new FormData();
  warmUpForm.set("file", new Blob([bad["not-a-zip"] as BlobPart]), "warm-up.npz");
  await timed("upload-bad", `${base}/api/v1/models/${trainSlug}/generating-sets`, { method: "POST", headers: { authorization: `Bearer ${modellerToken}` }, body: warmUpForm });
  await timed("run-poll", `${base}/api/v1/runs`, { headers: { authorization: `Bearer ${modellerToken}` } });
  const warmUp = samples.splice(0, samples.length);

  t0 = performance.now();
  log("traffic starts");
  const traffic = [
    ...evaluators.flatMap((token, n) => [evaluateLoop(token, n), evaluateLoop(token, n + 1)]),
    pageLoop(sessionCookie),
    trainingLoop(modellerToken),
    uploadLoop(modellerToken, { good, bad }),
    faults(modellerToken),
  ];
  const stopper = (async () => {
    while (elapsed() < SECONDS && samples.length < MAX_REQUESTS) await new Promise((resolve) => setTimeout(resolve, 200));
    stopTraffic = true;
  })();
  await Promise.all([...traffic, stopper]);
  const trafficSeconds = elapsed();
  log(`traffic stopped after ${samples.length} requests; waiting for the runs in flight`);
  mkdirSync(`${root}/.data`, { recursive: true });
  writeFileSync(`${root}/.data/soak-samples-latest.json`, JSON.stringify({ windows, runs, refusedTrainings, faultRuns, samples }));

  // Every run must end: succeeded, or failed with a reason.
  const until = performance.now() + 120_000;
  let runRows: { id: number; state: string; error: string | null; version_id: number | null }[] = [];
  for (;;) {
    try {
      runRows = await db()("runs").whereIn("id", runs.map((r) => r.id).concat([0])).select("id", "state", "error", "version_id");
    } catch {
      runRows = [];
    }
    if (runRows.length === runs.length && runRows.every((r) => !["queued", "running"].includes(r.state))) break;
    if (performance.now() > until) break;
    await new Promise((resolve) => setTimeout(resolve, 500));
  }

  const integrity = await verifyStoredVersions(db());
  const soakVersions: { coefficients_sha256: string; has_blob: number }[] = await db()("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .leftJoin("version_blobs", "version_blobs.version_id", "model_versions.id")
    .where("models.slug", trainSlug)
    .select("model_versions.coefficients_sha256", db().raw("version_blobs.version_id IS NOT NULL AS has_blob"));
  const uploadsStored: { n: number | string }[] = await db()("generating_sets").join("models", "models.id", "generating_sets.model_id").where("models.slug", trainSlug).count({ n: "*" });
  await closeDb();

  // The soaked database backed up and restored into an empty one, every blob verified there (npm run backup/restore).
  const { runBackup, runRestore } = await import("../lib/ops/backup.ts");
  const { getConfig } = await import("../lib/config/index.ts");
  rootSql(`DROP DATABASE IF EXISTS \`${database}_restore\``);
  const backup = await runBackup({ config: getConfig(), outDir: `${root}/.data/soak-backups` });
  let restoreLine: string;
  let restoreFailed = false;
  try {
    const restored = await runRestore({ config: getConfig(), dumpFile: backup.dumpFile, databaseName: `${database}_restore` });
    restoreLine = `restore into an empty database ${restored.seconds.toFixed(2)} s, ${restored.integrity.checked} versions verified, ${restored.problems.length} problems`;
  } catch (error) {
    restoreFailed = true;
    restoreLine = `restore FAILED: ${(error as Error).message}`;
  }
  rootSql(`DROP DATABASE IF EXISTS \`${database}_restore\``);
  const backupLine = `Backup: ${(backup.manifest.dumpBytes / 1e6).toFixed(1)} MB dump of ${backup.manifest.versions.length} versions in ${backup.seconds.toFixed(2)} s; ${restoreLine}`;

  // ---- the report ----
  const served = samples.filter((s) => s.status > 0).length;
  const kinds = [...new Set(samples.map((s) => s.kind))];
  const lines: string[] = [];
  const out = (line = "") => lines.push(line);
  out(`Stillpoint soak report: ${samples.length} requests in ${trafficSeconds.toFixed(0)} s of traffic (${served} answered), ${runs.length} training runs`);
  out(`Warm-up before the traffic (not counted below): ${warmUp.map((s) => `${s.kind} ${s.status || s.error} in ${f(s.ms)} ms`).join(", ")}`);
  out();
  out(`Outage windows (announced; from the stop until the service was back plus ${RECOVERY_SECONDS} s; a request counts inside when its time in flight overlaps one):`);
  for (const w of windows) out(`  ${w.name.padEnd(44)} ${w.from.toFixed(1)} s - ${w.to.toFixed(1)} s`);
  out();
  out("Answers by kind and status, latency (ms) of answered requests:");
  out(`  ${"kind".padEnd(12)} ${"n".padStart(6)}  ${"statuses".padEnd(44)} ${"p50".padStart(6)} ${"p90".padStart(6)} ${"p99".padStart(6)} ${"max".padStart(7)}`);
  for (const kind of kinds) {
    const of = samples.filter((s) => s.kind === kind);
    const statuses = new Map<string, number>();
    for (const s of of) statuses.set(s.status === 0 ? `no answer (${s.error})` : String(s.status), (statuses.get(s.status === 0 ? `no answer (${s.error})` : String(s.status)) ?? 0) + 1);
    const ms = of.filter((s) => s.status > 0).map((s) => s.ms);
    const statusText = [...statuses].sort().map(([k, n]) => `${k}: ${n}`).join(", ");
    out(`  ${kind.padEnd(12)} ${String(of.length).padStart(6)}  ${statusText.padEnd(44)} ${f(percentile(ms, 50)).padStart(6)} ${f(percentile(ms, 90)).padStart(6)} ${f(percentile(ms, 99)).padStart(6)} ${f(Math.max(...ms, 0)).padStart(7)}`);
  }
  out();
  const isError = (s: Sample) => s.status === 0 || s.status >= 500 || (s.kind !== "upload-bad" && s.status >= 400 && s.status !== 429);
  out("Errors by 10 s window (5xx and no-answer; 4xx other than the bad uploads'; * = inside an outage window):");
  const bins = Math.ceil(trafficSeconds / 10);
  for (let b = 0; b < bins; b++) {
    const of = samples.filter((s) => s.t >= b * 10 && s.t < (b + 1) * 10);
    const errors = of.filter(isError);
    const byKind = new Map<string, number>();
    for (const s of errors) byKind.set(`${s.status === 0 ? s.error : s.status}`, (byKind.get(`${s.status === 0 ? s.error : s.status}`) ?? 0) + 1);
    const marker = windows.some((w) => w.from < (b + 1) * 10 && w.to >= b * 10) ? "*" : " ";
    out(`  ${marker} ${String(b * 10).padStart(4)}-${String((b + 1) * 10).padEnd(4)} s  ${String(of.length).padStart(6)} requests, ${String(errors.length).padStart(5)} errors  ${[...byKind].map(([k, n]) => `${k}: ${n}`).join(", ")}`);
  }
  const outside5xx = samples.filter((s) => (s.status >= 500 || s.status === 0) && !inWindow(s));
  const inside503 = samples.filter((s) => s.status === 503 && inWindow(s));
  const noRetryAfter = samples.filter((s) => s.status === 503 && !s.retryAfter);
  const slowInOutage = samples.filter((s) => inWindow(s) && s.ms > SLOW_MS);
  const slowAnywhere = samples.filter((s) => s.ms > SLOW_MS);
  out();
  out(`5xx or no answer outside the outage windows: ${outside5xx.length}${outside5xx.length ? ` (${outside5xx.slice(0, 5).map((s) => `${s.kind} ${s.status || s.error} at ${s.t.toFixed(1)} s`).join("; ")})` : ""}`);
  out(`503 inside the windows: ${inside503.length}; 503 without Retry-After: ${noRetryAfter.length}`);
  out(`answers slower than 5 s: ${slowAnywhere.length} (${slowInOutage.length} inside an outage window)${slowAnywhere.length ? `: ${slowAnywhere.slice(0, 5).map((s) => `${s.kind} ${(s.ms / 1000).toFixed(1)} s at ${s.t.toFixed(1)} s`).join("; ")}` : ""}`);
  out(`bad uploads accepted: ${badAccepted.length}${badAccepted.length ? ` (${badAccepted.join(", ")})` : ""}; generating sets stored for the soak model: ${Number(uploadsStored[0]?.n ?? 0)} (good uploads answered 201: ${samples.filter((s) => s.kind === "upload-good" && s.status === 201).length})`);
  out();
  const byState = new Map<string, number>();
  for (const r of runRows) byState.set(r.state, (byState.get(r.state) ?? 0) + 1);
  const unfinished = runs.length - runRows.filter((r) => !["queued", "running"].includes(r.state)).length;
  out(`Runs: ${runs.length} started (${[...byState].map(([s, n]) => `${n} ${s}`).join(", ")}); unfinished: ${unfinished}; training requests refused: ${refusedTrainings.length} (${[...new Set(refusedTrainings.map((r) => r.status))].join(", ")})`);
  for (const r of runRows.filter((x) => x.state === "failed")) out(`  run ${r.id} failed: ${r.error}`);
  for (const [fault, id] of Object.entries(faultRuns)) {
    const row = runRows.find((r) => r.id === id);
    out(`  run in flight at the ${fault} fault: ${id === null ? "none" : `run ${id}, ${row?.state ?? "?"}${row?.error ? ` (${row.error})` : ""}`}`);
  }
  const distinct = new Set(soakVersions.map((v) => v.coefficients_sha256));
  out(`Versions of the soak model: ${soakVersions.length}, all with their blob: ${soakVersions.every((v) => Number(v.has_blob) === 1)}, distinct coefficient checksums: ${distinct.size} (one spec: must be 1)`);
  out(`Checksums: ${integrity.checked} versions checked (${Object.entries(integrity.byState).map(([s, n]) => `${n} ${s}`).join(", ")}), ${integrity.failures.length} failures${integrity.failures.length ? `: ${integrity.failures.map((x) => `${x.model} v${x.version}: ${x.reason}`).join("; ")}` : ""}`);
  out(backupLine);
  if (serverLines.length) {
    out();
    out(`Server and worker error lines: ${serverLines.length} (first 8)`);
    for (const line of serverLines.slice(0, 8)) out(`  ${line}`);
  }
  const failures = [
    outside5xx.length > 0 && "5xx outside the outage windows",
    noRetryAfter.length > 0 && "503 without Retry-After",
    slowInOutage.length > 0 && "answers slower than 5 s during an outage",
    unfinished > 0 && "runs left unfinished",
    integrity.failures.length > 0 && "checksum failures",
    distinct.size > 1 && "one spec stored different coefficients",
    soakVersions.some((v) => Number(v.has_blob) !== 1) && "a version without its blob",
    badAccepted.length > 0 && "bad uploads accepted",
    restoreFailed && "the backup did not restore verified",
  ].filter(Boolean);
  out();
  out(failures.length === 0 ? "RESULT: no lost or corrupted record, no 5xx outside the announced outage windows" : `RESULT: FAILED (${failures.join("; ")})`);
  console.log(lines.join("\n"));
  mkdirSync(`${root}/.data`, { recursive: true });
  const file = `${root}/.data/soak-report-${new Date().toISOString().replace(/[:.]/g, "-")}.txt`;
  writeFileSync(file, lines.join("\n") + "\n");
  log(`report written to ${file}`);
  if (failures.length > 0) process.exitCode = 1;
}

async function shutdown(): Promise<void> {
  stopTraffic = true;
  await Promise.all([...children].map((child) => stopChild(child)));
  spawnSync("bash", ["db/redis.sh", "stop", "soak"], { cwd: root, env, stdio: "ignore" });
  spawnSync("bash", ["db/mariadb.sh", "stop", "soak"], { cwd: root, env, stdio: "ignore" });
}

process.once("SIGINT", () => void shutdown().then(() => process.exit(130)));
process.once("SIGTERM", () => void shutdown().then(() => process.exit(143)));

main()
  .catch((error) => {
    console.error(`[soak] ${(error as Error).stack ?? error}`);
    process.exitCode = 1;
  })
  .finally(async () => {
    await shutdown();
    // Anything still holding the event loop (pools, sockets) must not keep the soak alive past its bound.
    setTimeout(() => process.exit(process.exitCode ?? 0), 2_000).unref();
  });
