// Runs once when the server starts (Next.js instrumentation hook).
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  const [{ warmModelCache }, { releasedEvaluationTargets }, { warmRateLimiter }] = await Promise.all([
    import("./lib/registry/evaluate"),
    import("./lib/db/versions"),
    import("./lib/api/rateLimit"),
  ]);
  warmRateLimiter();
  // In the background: the server answers at once; an evaluation that arrives first shares the load in progress.
  void warmModelCache(() => releasedEvaluationTargets());
}
