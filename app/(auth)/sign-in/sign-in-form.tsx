"use client";

import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState, type FormEvent } from "react";
import { signInErrorMessage } from "@/lib/auth/messages";
import { signInSchema } from "@/lib/validation/auth";

export function SignInForm({ callbackPath, initialError }: { callbackPath: string; initialError: string | null }) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(initialError);
  const [busy, setBusy] = useState(false);

  async function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const parsed = signInSchema.safeParse({ email: form.get("email"), password: form.get("password") });
    if (!parsed.success) {
      setError(parsed.error.issues[0]?.message ?? "Enter your e-mail address and password.");
      return;
    }
    setBusy(true);
    setError(null);
    const result = await signIn("credentials", { ...parsed.data, redirect: false, callbackUrl: callbackPath });
    if (!result || result.error) {
      setBusy(false);
      setError(signInErrorMessage(result?.error ?? "CredentialsSignin"));
      return;
    }
    router.replace(callbackPath);
    router.refresh();
  }

  return (
    <form onSubmit={onSubmit} className="flex flex-col gap-3" noValidate aria-describedby={error ? "sign-in-error" : undefined}>
      {error && (
        <p id="sign-in-error" role="alert" className="rounded border border-fault bg-fault-soft px-3 py-2 text-sm text-fault">
          {error}
        </p>
      )}
      <div className="flex flex-col gap-1">
        <label htmlFor="email" className="text-sm font-medium">
          E-mail
        </label>
        <input
          id="email"
          name="email"
          type="email"
          autoComplete="username"
          required
          autoFocus
          className="rounded border border-line bg-surface px-2 py-1.5 text-base"
        />
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="password" className="text-sm font-medium">
          Password
        </label>
        <input
          id="password"
          name="password"
          type="password"
          autoComplete="current-password"
          required
          className="rounded border border-line bg-surface px-2 py-1.5 text-base"
        />
      </div>
      <button
        type="submit"
        disabled={busy}
        className="mt-1 rounded bg-accent px-3 py-2 text-sm font-medium text-accent-ink disabled:opacity-60"
      >
        {busy ? "Signing in…" : "Sign in"}
      </button>
    </form>
  );
}
