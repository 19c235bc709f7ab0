import { describe, expect, it, vi } from "vitest";
import { z } from "zod";
import { PROBLEM_CONTENT_TYPE, toProblem, withProblems } from "@/lib/api/problem";
import { ConflictError, ForbiddenError, NotFoundError, OutsideValidityRangeError, UnauthenticatedError, UnprocessableError } from "@/lib/errors";

describe("problem details mapping", () => {
  it("maps a zod error to 422 with one issue per field", () => {
    const schema = z.object({ a: z.number(), b: z.object({ c: z.string() }) });
    const result = schema.safeParse({ a: "x", b: { c: 1 } });
    expect(result.success).toBe(false);
    const problem = toProblem(result.error, "/api/v1/x");
    expect(problem.status).toBe(422);
    expect(problem.instance).toBe("/api/v1/x");
    expect(problem.issues?.map((i) => i.path)).toEqual(["a", "b.c"]);
  });

  it.each([
    [new UnauthenticatedError(), 401],
    [new ForbiddenError("no"), 403],
    [new NotFoundError("no such model"), 404],
    [new ConflictError("slug taken"), 409],
    [new OutsideValidityRangeError("35 nm RMS exceeds 30 nm RMS"), 422],
  ])("maps %s to status %i with its message as detail", (error, status) => {
    const problem = toProblem(error);
    expect(problem.status).toBe(status);
    expect(problem.detail).toBe(error.message);
  });

  it("maps anything else to 500 without revealing internals", () => {
    const spy = vi.spyOn(console, "error").mockImplementation(() => {});
    const problem = toProblem(new Error("connect ECONNREFUSED 127.0.0.1:3307 password=secret"));
    spy.mockRestore();
    expect(problem.status).toBe(500);
    expect(JSON.stringify(problem)).not.toMatch(/ECONNREFUSED|3307|secret/);
  });

  it("never carries anything shaped like a token, and cuts a long quoted message", () => {
    const secret = `stp_${"a1B2".repeat(10)}xyz`;
    const problem = toProblem(new UnprocessableError(`got ${JSON.stringify(secret)} and ${"x".repeat(5000)}`, [{ path: "ordering", message: `got ${secret}` }]));
    expect(JSON.stringify(problem)).not.toContain(secret);
    expect(problem.detail).toContain("stp_[redacted]");
    expect(problem.detail!.length).toBeLessThanOrEqual(500);
    expect(problem.issues![0]!.message).toBe("got stp_[redacted]");
  });

  it("withProblems answers application/problem+json with the mapped status", async () => {
    const handler = withProblems(async () => {
      throw new NotFoundError("model velora-ttl-2 not found");
    });
    const response = await handler(new Request("http://localhost/api/v1/models/velora-ttl-2"), {});
    expect(response.status).toBe(404);
    expect(response.headers.get("content-type")).toBe(PROBLEM_CONTENT_TYPE);
    expect(await response.json()).toEqual({
      type: "about:blank",
      title: "Not found",
      status: 404,
      detail: "model velora-ttl-2 not found",
      instance: "/api/v1/models/velora-ttl-2",
    });
  });
});
