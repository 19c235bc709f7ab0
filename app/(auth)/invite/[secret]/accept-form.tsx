"use client";

import Link from "next/link";
import { useState, type ReactNode } from "react";
import { useForm } from "react-hook-form";
import { describedBy, Field, FormError, inputClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { acceptInvitationSchema, type AcceptInvitationInput } from "@/lib/validation/user";
import { acceptInvitationAction } from "./actions";

const plainInput = inputClass.replace(" font-mono", "");

/** The form of an open invitation; `children` (what the link offers: roles, expiry) show until it is accepted. */
export function AcceptForm({ secret, email, children }: { secret: string; email: string; children?: ReactNode }) {
  const [accepted, setAccepted] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<AcceptInvitationInput, unknown, AcceptInvitationInput>({
    resolver: schemaResolver(acceptInvitationSchema),
    defaultValues: { name: "", password: "", confirm: "" },
  });
  const { formError, submit } = useActionErrors(setError);

  const onSubmit = handleSubmit(async (values) => {
    const data = await submit(() => acceptInvitationAction(secret, values));
    if (data) setAccepted(data.email);
  });

  if (accepted) {
    return (
      <div role="status" className="flex flex-col gap-2 rounded border border-good bg-surface px-3 py-3 text-sm" data-testid="invitation-accepted">
        <p>Your account {accepted} is ready.</p>
        <Link href="/sign-in" className="self-start rounded bg-accent px-3 py-1.5 font-medium text-accent-ink">
          Sign in
        </Link>
      </div>
    );
  }
  const e = (path: string) => errorAt(errors, path);
  return (
    <>
      {children}
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-3" aria-label="Accept the invitation">
        <FormError message={formError} />
        <p className="text-sm">
          E-mail: <span className="font-mono">{email}</span>
        </p>
        <Field id="accept-name" label="Your name" hint="As the team should see it." error={e("name")}>
          <input autoComplete="name" className={plainInput} {...describedBy("accept-name", e("name"))} {...register("name")} />
        </Field>
        <Field id="accept-password" label="Password" hint="At least 12 characters." error={e("password")}>
          <input type="password" autoComplete="new-password" className={plainInput} {...describedBy("accept-password", e("password"))} {...register("password")} />
        </Field>
        <Field id="accept-confirm" label="Password again" error={e("confirm")}>
          <input type="password" autoComplete="new-password" className={plainInput} {...describedBy("accept-confirm", e("confirm"), false)} {...register("confirm")} />
        </Field>
        <SubmitButton busy={isSubmitting} busyText="Creating your account…">
          Create my account
        </SubmitButton>
      </form>
    </>
  );
}
