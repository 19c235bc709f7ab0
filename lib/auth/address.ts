/**
 * Where a request came from: one place for the sign-in limit per address and the audit log's "from where".
 *
 * The production server (server/app-server.ts) works the address out from the socket and, when TRUSTED_PROXY_HOPS
 * proxies stand in front of it, from the X-Forwarded-For entries those proxies appended (clientAddress), and hands
 * it on in CLIENT_ADDRESS_HEADER, replacing whatever a client sent under that name. Pages, route handlers, server
 * actions and next-auth read it back with requestAddress.
 */

/** The request header the production server puts the client's address in (any incoming value is overwritten). */
export const CLIENT_ADDRESS_HEADER = "x-stillpoint-client-address";

/** Recorded when no address is known (a request that did not pass through the production server). */
export const UNKNOWN_ADDRESS = "unknown";

/** An IPv4 address as a dual-stack socket reports it ("::ffff:127.0.0.1") in its usual form. */
function plainAddress(address: string): string {
  const mapped = /^::ffff:(\d{1,3}(?:\.\d{1,3}){3})$/i.exec(address);
  return mapped ? mapped[1] : address;
}

/**
 * The client's address, trusting `trustedHops` proxies in front of the server. With none (the default: `npm start`
 * serves directly), the socket's peer, whatever X-Forwarded-For says. With k, the entry the k-th proxy counted from
 * the server saw as its peer: each proxy appends its peer to X-Forwarded-For, so that is the k-th entry from the
 * right (entries further left were written by the client and prove nothing). A chain shorter than k (a request that
 * bypassed a proxy) gives its furthest entry.
 */
export function clientAddress(socketAddress: string | undefined, forwardedFor: string | string[] | undefined, trustedHops: number): string {
  const forwarded = (Array.isArray(forwardedFor) ? forwardedFor.join(",") : (forwardedFor ?? ""))
    .split(",")
    .map((part) => part.trim())
    .filter(Boolean);
  // Nearest first: the socket's peer, then what each proxy in turn saw.
  const chain = [socketAddress ?? UNKNOWN_ADDRESS, ...forwarded.reverse()];
  return plainAddress(chain[Math.min(trustedHops, chain.length - 1)]);
}

/** The address of a request as the production server recorded it (UNKNOWN_ADDRESS when it did not). */
export function requestAddress(headers: Record<string, string | string[] | undefined> | Headers | undefined): string {
  const raw = headers instanceof Headers ? headers.get(CLIENT_ADDRESS_HEADER) : headers?.[CLIENT_ADDRESS_HEADER];
  const value = (Array.isArray(raw) ? raw[0] : raw)?.trim();
  return value ? value : UNKNOWN_ADDRESS;
}
