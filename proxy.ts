import { getToken } from "next-auth/jwt";
import { NextResponse, type NextRequest } from "next/server";
import { pageContentSecurityPolicy } from "@/lib/api/securityHeaders";
import { requireAuthSecret } from "@/lib/config";

// Two jobs, nothing else: every page gets a Content-Security-Policy with a fresh nonce (Next reads it from the request
// header and puts it on its own inline scripts), and signed-out visitors are redirected to the sign-in page. Every
// permission is checked on the server by the pages, route handlers and server actions themselves.
export async function proxy(request: NextRequest) {
  const nonce = Buffer.from(crypto.getRandomValues(new Uint8Array(16))).toString("base64");
  const policy = pageContentSecurityPolicy(nonce);
  const isSignIn = request.nextUrl.pathname === "/sign-in" || request.nextUrl.pathname.startsWith("/sign-in/");
  // An invitation link opens signed out: its secret is the credential (app/(auth)/invite).
  const isInvitation = request.nextUrl.pathname.startsWith("/invite/");
  if (!isSignIn && !isInvitation) {
    const token = await getToken({ req: request, secret: requireAuthSecret() });
    if (!token) {
      const signIn = new URL("/sign-in", request.url);
      signIn.searchParams.set("callbackUrl", request.nextUrl.pathname + request.nextUrl.search);
      const redirect = NextResponse.redirect(signIn);
      redirect.headers.set("Content-Security-Policy", policy);
      return redirect;
    }
  }
  const headers = new Headers(request.headers);
  headers.set("x-nonce", nonce);
  headers.set("Content-Security-Policy", policy);
  const response = NextResponse.next({ request: { headers } });
  response.headers.set("Content-Security-Policy", policy);
  return response;
}

export const config = {
  // Every page; not the API routes (they answer 401 themselves and carry the API policy from next.config.ts), nor
  // static files.
  matcher: ["/((?!api/|_next/static|_next/image|favicon\\.ico|icon\\.svg|robots\\.txt).*)"],
};
