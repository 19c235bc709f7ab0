"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { formatTime } from "@/components/format";
import { CheckboxGroup } from "@/components/forms/checkbox-group";
import { describedBy, Field, FormError, inputClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { ROLES } from "@/lib/access/roles";
import { inviteSchema, type InviteInput } from "@/lib/validation/user";
import { inviteAction } from "./actions";

interface InviteFormValues {
  email: string;
  roles: string[] | string | false;
}

const ROLE_TEXT: Record<(typeof ROLES)[number], string> = {
  viewer: "reads models, evaluates, makes tokens",
  modeller: "defines setups and models, trains",
  reviewer: "approves or returns versions",
  admin: "people, tokens, retirement, audit",
};

// One checked box of a group arrives as its value, several as an array, none as false.
const asList = (value: string[] | string | false) => (Array.isArray(value) ? value : value ? [value] : []);

export function InviteForm({ hours }: { hours: number }) {
  const router = useRouter();
  const [sent, setSent] = useState<{ email: string; expiresAt: string } | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    reset,
    formState: { errors, isSubmitting },
  } = useForm<InviteFormValues, unknown, InviteInput>({
    resolver: schemaResolver(inviteSchema, (v) => ({ email: v.email.trim(), roles: asList(v.roles) })),
    defaultValues: { email: "", roles: ["viewer"] },
  });
  const { formError, submit } = useActionErrors(setError);

  const onSubmit = handleSubmit(async (values) => {
    const data = await submit(() => inviteAction(values));
    if (data) {
      setSent(data);
      reset();
      router.refresh();
    }
  });

  const e = (path: string) => errorAt(errors, path);
  return (
    <div className="flex flex-col gap-3">
      {sent && (
        <p role="status" className="rounded border border-good bg-surface px-3 py-2 text-sm" data-testid="invitation-sent">
          Invitation sent to {sent.email}. The link works once, until {formatTime(sent.expiresAt)} UTC.
        </p>
      )}
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-3" aria-label="Invite a person">
        <FormError message={formError} />
        <Field id="invite-email" label="E-mail" hint={`They get a one-time link, valid for ${hours} hours, to choose a password.`} error={e("email")}>
          <input type="email" autoComplete="off" className={inputClass.replace(" font-mono", "")} {...describedBy("invite-email", e("email"))} {...register("email")} />
        </Field>
        <CheckboxGroup id="invite-roles" legend="Roles" options={ROLES.map((role) => ({ value: role, description: ROLE_TEXT[role] }))} registration={register("roles")} error={e("roles")} />
        <SubmitButton busy={isSubmitting} busyText="Sending…">
          Send invitation
        </SubmitButton>
      </form>
    </div>
  );
}
