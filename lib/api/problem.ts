import { ZodError } from "zod";
import { DomainError, RateLimitedError, ServiceUnavailableError, UnauthenticatedError } from "../errors";

/** RFC 9457 problem details. */
export interface ProblemDetails {
  type: string;
  title: string;
  status: number;
  detail?: string;
  instance?: string;
  issues?: { path: string; message: string }[];
}

export const PROBLEM_CONTENT_TYPE = "application/problem+json";

export function problemResponse(problem: ProblemDetails, headers: Record<string, string> = {}): Response {
  return new Response(JSON.stringify(problem), {
    status: problem.status,
    headers: { "content-type": PROBLEM_CONTENT_TYPE, "cache-control": "no-store", ...headers },
  });
}

/** Headers a problem carries with it: the Bearer challenge of a 401, the Retry-After of a 503. */
export function problemHeaders(error: unknown): Record<string, string> {
  if (error instanceof UnauthenticatedError) return { "www-authenticate": 'Bearer realm="stillpoint"' };
  if (error instanceof ServiceUnavailableError || error instanceof RateLimitedError) return { "retry-after": String(Math.max(1, Math.ceil(error.retryAfterSeconds))) };
  if (isConnectionFailure(error)) return { "retry-after": "5" };
  return {};
}

const CONNECTION_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "PROTOCOL_CONNECTION_LOST", "EPIPE", "ER_CON_COUNT_ERROR"]);

/** A database or queue that cannot be reached: the client's request was fine, a dependency is down. */
function isConnectionFailure(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  const name = (error as { name?: unknown } | null)?.name;
  return (typeof code === "string" && CONNECTION_CODES.has(code)) || name === "KnexTimeoutError";
}

/** The one mapping from anything thrown by a handler to a problem-details response. */
export function toProblem(error: unknown, instance?: string): ProblemDetails {
  if (error instanceof ZodError) {
    return {
      type: "about:blank",
      title: "Invalid request",
      status: 422,
      detail: "The request does not match the expected shape; see issues.",
      instance,
      issues: error.issues.map((issue) => ({
        path: issue.path.map(String).join("."),
        message: issue.message,
      })),
    };
  }
  if (error instanceof DomainError) {
    const issues = (error as { issues?: { path: string; message: string }[] }).issues;
    return { type: "about:blank", title: error.title, status: error.status, detail: error.message, instance, ...(issues && issues.length > 0 ? { issues } : {}) };
  }
  if (isConnectionFailure(error)) {
    return { type: "about:blank", title: "Service unavailable", status: 503, detail: "A service the registry depends on is not reachable; retry shortly.", instance };
  }
  if (error instanceof SyntaxError) {
    return { type: "about:blank", title: "Malformed JSON", status: 400, detail: "The request body is not valid JSON.", instance };
  }
  console.error("unhandled error in route handler", error);
  return {
    type: "about:blank",
    title: "Internal error",
    status: 500,
    detail: "The server could not complete the request.",
    instance,
  };
}

type Handler<C> = (request: Request, context: C) => Promise<Response>;

/** Wraps a route handler so every failure leaves as problem details. */
export function withProblems<C>(handler: Handler<C>): Handler<C> {
  return async (request, context) => {
    try {
      return await handler(request, context);
    } catch (error) {
      return problemResponse(toProblem(error, new URL(request.url).pathname), problemHeaders(error));
    }
  };
}
