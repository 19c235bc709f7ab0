"use client";

// First: zod's browser settings must be in place before the schemas below are built (see the module).
import "@/components/browser-zod-config";
import { zodResolver } from "@hookform/resolvers/zod";
import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { signInErrorMessage } from "@/lib/auth/messages";
import { signInSchema, type SignInInput } from "@/lib/validation/auth";

const inputClass = "rounded border border-line bg-surface px-2 py-1.5 text-base aria-[invalid=true]:border-fault";

export function SignInForm({ callbackPath, initialError }: { callbackPath: string; initialError: string | null }) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(initialError);
  const {
    register,
    handleSubmit,
    formState: { errors, isSubmitting },
  } = useForm<SignInInput>({ resolver: zodResolver(signInSchema) });

  const onSubmit = handleSubmit(async (values) => {
    setError(null);
    const result = await signIn("credentials", { ...values, redirect: false, callbackUrl: callbackPath });
    if (!result || result.error) {
      setError(signInErrorMessage(result?.error ?? "CredentialsSignin"));
      return;
    }
    router.replace(callbackPath);
    router.refresh();
  });

  return (
    <form onSubmit={onSubmit} className="flex flex-col gap-3" noValidate>
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
          type="email"
          autoComplete="username"
          autoFocus
          aria-invalid={errors.email ? true : undefined}
          aria-describedby={errors.email ? "email-error" : undefined}
          className={inputClass}
          {...register("email")}
        />
        {errors.email && (
          <p id="email-error" className="text-sm text-fault">
            {errors.email.message}
          </p>
        )}
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="password" className="text-sm font-medium">
          Password
        </label>
        <input
          id="password"
          type="password"
          autoComplete="current-password"
          aria-invalid={errors.password ? true : undefined}
          aria-describedby={errors.password ? "password-error" : undefined}
          className={inputClass}
          {...register("password")}
        />
        {errors.password && (
          <p id="password-error" className="text-sm text-fault">
            {errors.password.message}
          </p>
        )}
      </div>
      <button
        type="submit"
        disabled={isSubmitting}
        className="mt-1 rounded bg-accent px-3 py-2 text-sm font-medium text-accent-ink disabled:opacity-60"
      >
        {isSubmitting ? "Signing in…" : "Sign in"}
      </button>
    </form>
  );
}
