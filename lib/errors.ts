/**
 * Domain errors: thrown by the data-access layer and the auth helpers, mapped to HTTP
 * problem details in one place (lib/api/problem.ts).
 */
export abstract class DomainError extends Error {
  abstract readonly status: number;
  abstract readonly title: string;
  constructor(message: string) {
    super(message);
    this.name = new.target.name;
  }
}

export class UnauthenticatedError extends DomainError {
  readonly status = 401;
  readonly title = "Sign-in required";
  constructor(message = "Sign in to use this resource.") {
    super(message);
  }
}

export class ForbiddenError extends DomainError {
  readonly status = 403;
  readonly title = "Not permitted";
}

export class NotFoundError extends DomainError {
  readonly status = 404;
  readonly title = "Not found";
}

export class ConflictError extends DomainError {
  readonly status = 409;
  readonly title = "Conflict";
}

/** A wavefront or request lies outside the validity range a model version states. */
export class OutsideValidityRangeError extends DomainError {
  readonly status = 422;
  readonly title = "Outside the validity range";
  constructor(
    message: string,
    readonly issues: { path: string; message: string }[] = [],
  ) {
    super(message);
  }
}

/** A request that is well formed but cannot be processed as sent (a damaged file, a mismatched grid). */
export class UnprocessableError extends DomainError {
  readonly status = 422;
  readonly title = "Unprocessable request";
  constructor(
    message: string,
    /** Field issues in the problem details' `issues` shape, when the request has several things wrong. */
    readonly issues: { path: string; message: string }[] = [],
  ) {
    super(message);
  }
}

/** A version past its sunset: it is no longer served for evaluation. */
export class GoneError extends DomainError {
  readonly status = 410;
  readonly title = "Gone";
}

/** Too many requests for the caller's rate limit. */
export class RateLimitedError extends DomainError {
  readonly status = 429;
  readonly title = "Too many requests";
  constructor(
    message: string,
    readonly retryAfterSeconds: number,
  ) {
    super(message);
  }
}

export class PayloadTooLargeError extends DomainError {
  readonly status = 413;
  readonly title = "Too large";
}

/** The Retry-After of an answer whose dependency (database, queue) is down: API problems and the outage page alike. */
export const DEPENDENCY_RETRY_AFTER_SECONDS = 5;

/** A service the request depends on (database, queue) is down; the client may retry after `retryAfterSeconds`. */
export class ServiceUnavailableError extends DomainError {
  readonly status = 503;
  readonly title = "Service unavailable";
  constructor(
    message: string,
    readonly retryAfterSeconds = DEPENDENCY_RETRY_AFTER_SECONDS,
  ) {
    super(message);
  }
}

/** A body that is not what the route reads at all (not multipart, not a form). */
export class BadRequestError extends DomainError {
  readonly status = 400;
  readonly title: string = "Malformed request";
}

/** A body that should be JSON and is not. */
export class MalformedJsonError extends BadRequestError {
  override readonly title = "Malformed JSON";
}
