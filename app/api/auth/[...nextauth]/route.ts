import NextAuth from "next-auth";
import { authOptions } from "@/lib/auth/options";

type RouteContext = { params: Promise<{ nextauth: string[] }> };

// Options are built per request so the secret comes from the validated configuration at run time.
function handler(request: Request, context: RouteContext) {
  return NextAuth(request as never, context as never, authOptions());
}

export { handler as GET, handler as POST };
