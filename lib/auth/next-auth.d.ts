import type { Role } from "../access/roles";

declare module "next-auth" {
  interface User {
    roles: Role[];
  }
  interface Session {
    user: { id: number; email: string; name: string; roles: Role[] };
  }
}

declare module "next-auth/jwt" {
  interface JWT {
    userId: number;
    roles: Role[];
  }
}
