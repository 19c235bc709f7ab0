import type { Role } from "../access/roles";

declare module "next-auth" {
  interface User {
    roles: Role[];
    /** users.session_epoch at sign-in; a session whose epoch differs from the row's has ended. */
    sessionEpoch: number;
  }
  interface Session {
    user: { id: number; email: string; name: string; roles: Role[] };
    /** The session epoch written at sign-in (see User.sessionEpoch). */
    sessionEpoch: number;
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    userId: number;
    roles: Role[];
    sessionEpoch?: number;
  }
}
