import type { NextAuthOptions, User } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";
import { requireAuthSecret } from "../config";
import { recordAuditEvent } from "../db/audit";
import { findCredentialsByEmail, getUser, normaliseEmail } from "../db/users";
import { signInSchema } from "../validation/auth";
import { verifyPassword } from "./password";
import { isRole } from "../access/roles";

const SESSION_HOURS = 12;

async function authorize(raw: Record<string, unknown> | undefined): Promise<User | null> {
  const parsed = signInSchema.safeParse(raw ?? {});
  if (!parsed.success) return null;
  const { email, password } = parsed.data;
  const credentials = await findCredentialsByEmail(email);
  const valid = await verifyPassword(password, credentials?.passwordHash ?? null);
  if (!credentials || !valid) {
    await recordAuditEvent({
      actorUserId: credentials?.id ?? null,
      action: "sign-in.refused",
      detail: { email: normaliseEmail(email) },
    });
    return null;
  }
  const user = await getUser(credentials.id);
  if (!user) return null;
  await recordAuditEvent({ actorUserId: user.id, action: "sign-in", subjectType: "user", subjectId: user.id });
  return { id: String(user.id), email: user.email, name: user.name, roles: user.roles };
}

/** next-auth settings; built on demand so the secret is read from the validated configuration at run time. */
export function authOptions(): NextAuthOptions {
  return {
    secret: requireAuthSecret(),
    session: { strategy: "jwt", maxAge: SESSION_HOURS * 3600 },
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
        return session;
      },
    },
  };
}
