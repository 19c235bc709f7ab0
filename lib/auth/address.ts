/**
 * The address a request came from: the last entry of X-Forwarded-For, which a fronting proxy appends, or which Next's
 * server sets from the socket when the request carries none. (A client that reaches the server directly and sends
 * its own header chooses what is recorded; the sign-in limit per account holds all the same.) One function for the
 * audit log and the sign-in limit.
 */
export function requestAddress(headers: Record<string, string | string[] | undefined> | Headers | undefined): string {
  const raw = headers instanceof Headers ? headers.get("x-forwarded-for") : headers?.["x-forwarded-for"];
  const value = Array.isArray(raw) ? raw.join(",") : (raw ?? "");
  const last = value
    .split(",")
    .map((part) => part.trim())
    .filter(Boolean)
    .at(-1);
  return last ?? "unknown";
}

