// Runs once when the server starts (Next.js instrumentation hook).
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  // Configuration validated before anything else: a bad variable stops the server with a message naming it.
  (await import("./lib/config/startup")).validateConfigOrExit();
  const [{ warmModelCache }, { releasedEvaluationTargets }, { warmRateLimiter }] = await Promise.all([
    import("./lib/registry/evaluate"),
    import("./lib/db/versions"),
    import("./lib/api/rateLimit"),
  ]);
  warmRateLimiter();
  // The pool's first connections before the first request (a database that is down now does not stop the start).
  await (await import("./lib/db/knex")).warmPool();
  // In the background: the server answers at once; an evaluation that arrives first shares the load in progress.
  void warmModelCache(() => releasedEvaluationTargets());
}
