import { cookies } from "next/headers";
import { decode, encode } from "next-auth/jwt";
import { getConfig, requireAuthSecret } from "../config";

const SECURE_NAME = "__Secure-next-auth.session-token";
const PLAIN_NAME = "next-auth.session-token";

/**
 * Write the session epoch into the session cookie of the request in hand (a server action), so that this session
 * survives the epoch being raised (a password change) while every other one ends. The cookie keeps next-auth's
 * name, flags and lifetime.
 */
export async function keepCurrentSession(sessionEpoch: number): Promise<void> {
  const store = await cookies();
  const secure = store.get(SECURE_NAME) !== undefined;
  const name = secure ? SECURE_NAME : PLAIN_NAME;
  const secret = requireAuthSecret();
  const token = await decode({ token: store.get(name)?.value, secret });
  if (!token) return;
  const maxAge = getConfig().sessionMaxAgeSeconds;
  const value = await encode({ token: { ...token, sessionEpoch }, secret, maxAge });
  store.set(name, value, { httpOnly: true, sameSite: "lax", path: "/", secure, expires: new Date(Date.now() + maxAge * 1000) });
}
