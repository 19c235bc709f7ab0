"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { CheckboxGroup } from "@/components/forms/checkbox-group";
import { describedBy, Field, FormError, inputClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import type { TokenScope } from "@/lib/access/actor";
import { createTokenSchema, type CreateTokenInput } from "@/lib/validation/registry";
import { createTokenAction } from "./actions";

interface TokenFormValues {
  name: string;
  scopes: string[] | string | false;
  /** A date (yyyy-mm-dd) or empty for no expiry. */
  expiresAt: string;
  models: string[] | string | false;
}

const SCOPE_TEXT: Record<TokenScope, string> = {
  read: "read models, versions, runs and coefficient files",
  evaluate: "evaluate versions",
  train: "create setups and models, upload, train, submit",
};

// One checked box of a group arrives as its value, several as an array, none as false.
const asList = (value: string[] | string | false) => (Array.isArray(value) ? value : value ? [value] : []);

function toInput(values: TokenFormValues): unknown {
  const models = asList(values.models);
  return {
    name: values.name,
    scopes: asList(values.scopes),
    expiresAt: values.expiresAt === "" ? null : `${values.expiresAt}T00:00:00Z`,
    models: models.length === 0 ? null : models,
  };
}

export function TokenForm({ scopes, models }: { scopes: readonly TokenScope[]; models: { slug: string; name: string }[] }) {
  const router = useRouter();
  const [created, setCreated] = useState<{ name: string; token: string } | null>(null);
  const [copied, setCopied] = useState(false);
  const {
    register,
    handleSubmit,
    setError,
    reset,
    formState: { errors, isSubmitting },
  } = useForm<TokenFormValues, unknown, CreateTokenInput>({
    resolver: schemaResolver(createTokenSchema, toInput),
    defaultValues: { name: "", scopes: ["read", "evaluate"], expiresAt: "", models: [] },
  });
  const { formError, submit } = useActionErrors(setError);

  const onSubmit = handleSubmit(async (values) => {
    setCopied(false);
    const data = await submit(() => createTokenAction(values));
    if (data) {
      setCreated({ name: data.name, token: data.token });
      reset();
      router.refresh();
    }
  });

  async function copy() {
    if (!created) return;
    try {
      await navigator.clipboard.writeText(created.token);
      setCopied(true);
    } catch {
      setCopied(false);
    }
  }

  const e = (path: string) => errorAt(errors, path);
  return (
    <div className="flex flex-col gap-4">
      {created && (
        <div className="rounded border border-good bg-surface p-3" role="status" data-testid="token-secret">
          <p className="text-sm font-medium">Token “{created.name}” created. Copy it now: you will not see it again.</p>
          <p className="mt-1 text-xs text-muted">Only its hash is stored; if you lose it, revoke it and create another.</p>
          <div className="mt-2 flex items-center gap-2">
            <code className="min-w-0 flex-1 break-all rounded-sm bg-sunken px-2 py-1 font-mono text-xs" data-testid="token-value">
              {created.token}
            </code>
            <button type="button" onClick={copy} className="rounded border border-line px-2 py-1 text-sm hover:bg-sunken">
              {copied ? "Copied" : "Copy"}
            </button>
          </div>
        </div>
      )}
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-3" aria-label="New API token">
        <FormError message={formError} />
        <Field id="token-name" label="Name" hint="What uses it, e.g. “budget-script”." error={e("name")}>
          <input className={inputClass.replace(" font-mono", "")} autoComplete="off" {...describedBy("token-name", e("name"))} {...register("name")} />
        </Field>
        <CheckboxGroup id="token-scopes" legend="Scopes" options={scopes.map((scope) => ({ value: scope, description: SCOPE_TEXT[scope] }))} registration={register("scopes")} error={e("scopes")} />
        <Field id="token-expires" label="Expires" hint="Leave empty for a token that does not expire (00:00 UTC that day)." error={e("expiresAt")}>
          <input type="date" className={inputClass} {...describedBy("token-expires", e("expiresAt"))} {...register("expiresAt")} />
        </Field>
        <CheckboxGroup
          id="token-models"
          legend="Models"
          options={models.map((m) => ({ value: m.slug, description: m.name }))}
          registration={register("models")}
          error={e("models")}
          hint="None ticked: every model, including later ones."
        />
        <SubmitButton busy={isSubmitting} busyText="Creating…">
          Create token
        </SubmitButton>
      </form>
    </div>
  );
}
