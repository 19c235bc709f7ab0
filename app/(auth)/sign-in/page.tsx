import type { Metadata } from "next";
import { StandingNotice } from "@/components/standing-notice";
import { signInErrorMessage } from "@/lib/auth/messages";
import { safeCallbackPath } from "@/lib/validation/auth";
import { SignInForm } from "./sign-in-form";

export const metadata: Metadata = { title: "Sign in" };

type SearchParams = Promise<Record<string, string | string[] | undefined>>;

function first(value: string | string[] | undefined): string | undefined {
  return Array.isArray(value) ? value[0] : value;
}

export default async function SignInPage({ searchParams }: { searchParams: SearchParams }) {
  const params = await searchParams;
  const callbackPath = safeCallbackPath(first(params.callbackUrl));
  const error = signInErrorMessage(first(params.error));
  const signedOut = first(params.signedOut) === "1";
  return (
    <div className="flex min-h-screen flex-col">
      <main className="mx-auto flex w-full max-w-form flex-1 flex-col justify-center px-4 py-12">
        <p className="font-mono text-sm font-medium tracking-tight">
          stillpoint<span className="text-accent">·</span>
        </p>
        <h1 className="mb-1 mt-6 text-xl font-semibold">Sign in</h1>
        <p className="mb-6 text-sm text-muted">Tilt-to-length surrogate models for the team&apos;s telescopes.</p>
        {signedOut && !error && (
          <p role="status" className="mb-3 text-sm text-good">
            You are signed out.
          </p>
        )}
        <SignInForm callbackPath={callbackPath} initialError={error} />
      </main>
      <footer className="mx-auto w-full max-w-form px-4 pb-6">
        <StandingNotice />
      </footer>
    </div>
  );
}
