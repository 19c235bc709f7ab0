import type { NextAuthOptions, User } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { getConfig, requireAuthSecret } from "../config";
import { recordAuditEvent } from "../db/audit";
import { findCredentialsByEmail, getUser, normaliseEmail } from "../db/users";
import { signInSchema } from "../validation/auth";
import { verifyPassword } from "./password";
import { isRole } from "../access/roles";
import { ACCOUNT_DISABLED, SIGN_IN_RATE_LIMITED } from "./messages";
import { requestAddress } from "./address";
import { clearSignInFailures, recordFailedSignIn, signInBlockedFor } from "./signInLimit";

type AuthorizeRequest = { headers?: Record<string, string | string[] | undefined> } | undefined;

async function authorize(raw: Record<string, unknown> | undefined, request: AuthorizeRequest): Promise<User | null> {
  const parsed = signInSchema.safeParse(raw ?? {});
  if (!parsed.success) return null;
  const { email, password } = parsed.data;
  const account = normaliseEmail(email);
  const address = requestAddress(request?.headers);
  const waitSeconds = await signInBlockedFor(account, address);
  if (waitSeconds > 0) {
    await recordAuditEvent({ actorUserId: null, clientAddress: address, action: "sign-in.rate-limited", detail: { email: account, address, waitSeconds } });
    // next-auth puts the message in the URL as the error code; the sign-in page words it (lib/auth/messages.ts).
    throw new Error(SIGN_IN_RATE_LIMITED);
  }
  const credentials = await findCredentialsByEmail(email);
  const valid = await verifyPassword(password, credentials?.passwordHash ?? null);
  if (!credentials || !valid || credentials.disabled) {
    await recordFailedSignIn(account, address);
    await recordAuditEvent({
      actorUserId: credentials?.id ?? null,
      clientAddress: address,
      action: "sign-in.refused",
      detail: { email: account, address, ...(credentials?.disabled && valid ? { reason: "disabled" } : {}) },
    });
    if (credentials?.disabled && valid) throw new Error(ACCOUNT_DISABLED);
    return null;
  }
  const user = await getUser(credentials.id);
  if (!user) return null;
  await clearSignInFailures(account);
  await recordAuditEvent({ actorUserId: user.id, clientAddress: address, action: "sign-in", subjectType: "user", subjectId: user.id, detail: { address } });
  return { id: String(user.id), email: user.email, name: user.name, roles: user.roles, sessionEpoch: credentials.sessionEpoch };
}

/** next-auth settings; built on demand so the secret is read from the validated configuration at run time. */
export function authOptions(): NextAuthOptions {
  return {
    secret: requireAuthSecret(),
    // Expires after maxAge without a request; each request that reads the session renews it (next-auth's rolling JWT).
    session: { strategy: "jwt", maxAge: getConfig().sessionMaxAgeSeconds },
    pages: { signIn: "/sign-in", error: "/sign-in" },
    providers: [
      CredentialsProvider({
        name: "E-mail and password",
        credentials: {
          email: { label: "E-mail", type: "email" },
          password: { label: "Password", type: "password" },
        },
        authorize,
      }),
    ],
    callbacks: {
      jwt({ token, user }) {
        if (user) {
          token.userId = Number(user.id);
          token.roles = user.roles;
          token.sessionEpoch = user.sessionEpoch;
        }
        return token;
      },
      session({ session, token }) {
        session.user = {
          id: token.userId,
          email: token.email ?? "",
          name: token.name ?? "",
          roles: (token.roles ?? []).filter(isRole),
        };
        // Compared with the person's row on every request by getSessionUser (lib/auth/session.ts).
        session.sessionEpoch = token.sessionEpoch ?? 0;
        return session;
      },
    },
    logger: sessionLogger,
  };
}

/**
 * next-auth's log lines, without what they carry: its errors may hold the request's body (a password) or a token,
 * so only the code and the error's name and message leave.
 */
const sessionLogger: NonNullable<NextAuthOptions["logger"]> = {
  error(code, metadata) {
    const error = metadata instanceof Error ? metadata : (metadata as { error?: unknown } | undefined)?.error;
    const what = error instanceof Error ? `${error.name}: ${error.message}` : "";
    console.error(`next-auth ${code}${what ? ` (${what})` : ""}`);
  },
  warn(code) {
    console.warn(`next-auth warning ${code}`);
  },
  debug() {},
};
