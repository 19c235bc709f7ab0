import { ZodError } from "zod";
import { DEPENDENCY_RETRY_AFTER_SECONDS, DomainError, RateLimitedError, ServiceUnavailableError, UnauthenticatedError } from "../errors";

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

/** Headers a problem carries with it: the Bearer challenge of a 401, the Retry-After of a 503. */
export function problemHeaders(error: unknown): Record<string, string> {
  if (error instanceof UnauthenticatedError) return { "www-authenticate": 'Bearer realm="stillpoint"' };
  if (error instanceof ServiceUnavailableError || error instanceof RateLimitedError) return { "retry-after": String(Math.max(1, Math.ceil(error.retryAfterSeconds))) };
  if (isConnectionFailure(error)) return { "retry-after": String(DEPENDENCY_RETRY_AFTER_SECONDS) };
  return {};
}

const CONNECTION_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "PROTOCOL_CONNECTION_LOST", "EPIPE", "ER_CON_COUNT_ERROR"]);

/** A database or queue that cannot be reached: the client's request was fine, a dependency is down. */
function isConnectionFailure(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  const name = (error as { name?: unknown } | null)?.name;
  return (typeof code === "string" && CONNECTION_CODES.has(code)) || name === "KnexTimeoutError";
}

/** What an API token looks like (lib/db/tokens.ts TOKEN_PREFIX + 43 base64url characters), wherever it appears. */
const TOKEN_LIKE = /stp_[A-Za-z0-9_-]{20,}/g;
/** Longest message a problem carries: messages may quote what the client sent, which may be anything. */
const MAX_MESSAGE_CHARS = 500;

/**
 * A message as a problem may carry it: anything shaped like an API token replaced (a client that put its token in the
 * wrong field gets no echo of it, and no log line holds one), and cut to MAX_MESSAGE_CHARS.
 */
export function redactSecrets(text: string): string {
  const redacted = text.replace(TOKEN_LIKE, "stp_[redacted]");
  return redacted.length > MAX_MESSAGE_CHARS ? `${redacted.slice(0, MAX_MESSAGE_CHARS - 1)}…` : redacted;
}

function redacted(problem: ProblemDetails): ProblemDetails {
  return {
    ...problem,
    ...(problem.detail === undefined ? {} : { detail: redactSecrets(problem.detail) }),
    ...(problem.instance === undefined ? {} : { instance: redactSecrets(problem.instance) }),
    ...(problem.issues ? { issues: problem.issues.map((issue) => ({ path: redactSecrets(issue.path), message: redactSecrets(issue.message) })) } : {}),
  };
}

/** The one mapping from anything thrown by a handler to a problem-details response. */
export function toProblem(error: unknown, instance?: string): ProblemDetails {
  return redacted(unredactedProblem(error, instance));
}

function unredactedProblem(error: unknown, instance?: string): ProblemDetails {
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
  // The message and stack only: an error object may carry the request (headers with a token) among its properties.
  const what = error instanceof Error ? `${error.name}: ${error.message}\n${error.stack ?? ""}` : String(error);
  console.error(`unhandled error in route handler ${instance ?? ""}: ${what.slice(0, 4000).replace(TOKEN_LIKE, "stp_[redacted]")}`);
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
      const answer = problemAnswer(error, new URL(request.url).pathname);
      return new Response(answer.body, answer);
    }
  };
}

/** What a failure answers, as status, headers and text: for withProblems and for writers without a Response. */
export function problemAnswer(error: unknown, instance: string): { status: number; headers: Record<string, string>; body: string } {
  const problem = toProblem(error, instance);
  return { status: problem.status, headers: { "content-type": PROBLEM_CONTENT_TYPE, "cache-control": "no-store", ...problemHeaders(error) }, body: JSON.stringify(problem) };
}
