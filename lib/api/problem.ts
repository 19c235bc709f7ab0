import { ZodError } from "zod";
import { DomainError } from "../errors";

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

export function problemResponse(problem: ProblemDetails): Response {
  return new Response(JSON.stringify(problem), {
    status: problem.status,
    headers: { "content-type": PROBLEM_CONTENT_TYPE, "cache-control": "no-store" },
  });
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
    return { type: "about:blank", title: error.title, status: error.status, detail: error.message, instance };
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
      return problemResponse(toProblem(error, new URL(request.url).pathname));
    }
  };
}
