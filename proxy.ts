import { getToken } from "next-auth/jwt";
import { NextResponse, type NextRequest } from "next/server";
import { requireAuthSecret } from "@/lib/config";

// Only redirects signed-out visitors to the sign-in page; every permission is checked on the server
// by the pages, route handlers and server actions themselves.
export async function proxy(request: NextRequest) {
  const token = await getToken({ req: request, secret: requireAuthSecret() });
  if (token) return NextResponse.next();
  const signIn = new URL("/sign-in", request.url);
  signIn.searchParams.set("callbackUrl", request.nextUrl.pathname + request.nextUrl.search);
  return NextResponse.redirect(signIn);
}

export const config = {
  // Everything except the sign-in page, invitation links (their secret is the credential), API routes (they answer 401 themselves), and static files.
  matcher: ["/((?!sign-in|invite/|api/|_next/static|_next/image|favicon\\.ico|icon\\.svg|robots\\.txt).*)"],
};
