"use client";

import { useRouter } from "next/navigation";
import { useForm, useWatch, type Control } from "react-hook-form";
import { describedBy, Field, FormError, inputClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { formatNumber } from "@/components/format";
import { derivedQuantities } from "@/lib/optics/derived";
import type { OpticalSetup } from "@/lib/optics/types";
import { createSetupSchema, type CreateSetupInput } from "@/lib/validation/registry";
import { createSetupAction } from "./actions";

interface NumberField {
  path: string;
  label: string;
  unit?: string;
  hint: string;
  step?: string;
}

const FIELDS: NumberField[] = [
  { path: "setup.wavelengthNm", label: "Wavelength", unit: "nm", hint: "Laser wavelength λ." },
  { path: "setup.apertureDiameterM", label: "Aperture diameter", unit: "m", hint: "D = 2R, the clear aperture of the telescope." },
  { path: "setup.beamRadiusM", label: "Beam radius", unit: "m", hint: "w: the 1/e² intensity radius at the pupil." },
  { path: "setup.distanceM", label: "Distance", unit: "m", hint: "L: to the far-field plane, e.g. 2.2e9." },
  { path: "setup.farField.halfAngleNrad", label: "Far-field half angle", unit: "nrad", hint: "h: the map spans −h … +h on both axes." },
  { path: "setup.farField.pointsPerAxis", label: "Nodes per axis", hint: "M: odd, so that boresight is a node.", step: "2" },
  { path: "setup.pupilSamples", label: "Pupil samples per axis", hint: "N: 128 reaches about 0.3 % of the peak TTL.", step: "1" },
];

export function SetupForm({ initial }: { initial: OpticalSetup }) {
  const router = useRouter();
  const {
    register,
    handleSubmit,
    setError,
    control,
    formState: { errors, isSubmitting },
  } = useForm<CreateSetupInput, unknown, CreateSetupInput>({
    resolver: schemaResolver(createSetupSchema),
    defaultValues: { name: "", setup: initial },
    mode: "onTouched",
  });
  const { formError, submit } = useActionErrors(setError);

  const onSubmit = handleSubmit(async (values) => {
    const data = await submit(() => createSetupAction(values));
    if (data) router.push(data.next);
  });

  const nameError = errorAt(errors, "name");
  return (
    <form onSubmit={onSubmit} noValidate className="grid gap-6 lg:grid-cols-[minmax(0,28rem)_minmax(0,26rem)]" aria-label="New optical setup">
      <div className="flex flex-col gap-3">
        <FormError message={formError} />
        <Field id="setup-name" label="Name" hint="Unique, e.g. “Velora transmit, 25² nodes”." error={nameError}>
          <input className={inputClass.replace(" font-mono", "")} {...describedBy("setup-name", nameError)} {...register("name")} />
        </Field>
        <fieldset className="grid grid-cols-2 gap-x-4 gap-y-3 rounded border border-line bg-surface p-3">
          <legend className="px-1 text-xs font-medium uppercase tracking-wide text-muted">Optics and grids</legend>
          {FIELDS.map((field) => {
            const id = `setup-${field.path.split(".").pop()}`;
            const error = errorAt(errors, field.path);
            return (
              <Field key={field.path} id={id} label={field.label} unit={field.unit} hint={field.hint} error={error}>
                <input
                  type="number"
                  inputMode="decimal"
                  step={field.step ?? "any"}
                  className={inputClass}
                  {...describedBy(id, error)}
                  {...register(field.path as "setup.wavelengthNm", { valueAsNumber: true })}
                />
              </Field>
            );
          })}
        </fieldset>
        <SubmitButton busy={isSubmitting} busyText="Saving…">
          Save setup
        </SubmitButton>
      </div>
      <DerivedPanel control={control} />
    </form>
  );
}

function DerivedPanel({ control }: { control: Control<CreateSetupInput, unknown, CreateSetupInput> }) {
  const setup = useWatch({ control, name: "setup" });
  let derived: ReturnType<typeof derivedQuantities> | null = null;
  try {
    derived = derivedQuantities(setup);
  } catch {
    derived = null;
  }
  const h = setup.farField?.halfAngleNrad;
  const m = setup.farField?.pointsPerAxis;
  const stepNrad = Number.isFinite(h) && Number.isInteger(m) && m >= 3 ? (2 * h) / (m - 1) : null;
  const alpha = derived ? 1 / derived.beamToApertureRatio : null;
  const rows: [string, string, string][] = derived
    ? [
        ["Diffraction angle λ/D", `${formatNumber(derived.diffractionAngleNrad)} nrad`, "diffraction-angle"],
        ["Half angle in λ/D", formatNumber(h / derived.diffractionAngleNrad, 3), "half-angle-ratio"],
        ["Node spacing", stepNrad === null ? "–" : `${formatNumber(stepNrad)} nrad`, "node-spacing"],
        ["Beam-to-aperture ratio w/R", formatNumber(derived.beamToApertureRatio), "beam-ratio"],
        ["Truncation ratio α = R/w", formatNumber(alpha), "alpha"],
        ["Fresnel number R²/(λL)", formatNumber(derived.fresnelNumber, 3), "fresnel"],
        ["On-axis gain g(α)", formatNumber(derived.onAxisGain), "gain"],
        ["Optimum g at α = " + formatNumber(derived.optimumAlpha), formatNumber(derived.optimumGain), "gain-optimum"],
      ]
    : [];
  return (
    <aside aria-labelledby="derived-heading" aria-live="polite" className="self-start rounded border border-line bg-surface p-3" data-testid="derived-panel">
      <h2 id="derived-heading" className="mb-2 text-xs font-medium uppercase tracking-wide text-muted">
        Derived quantities
      </h2>
      {derived === null ? (
        <p className="text-sm text-muted">Enter positive wavelength, aperture, beam radius and distance to see them.</p>
      ) : (
        <>
          <dl className="grid grid-cols-[1fr_auto] gap-x-4 gap-y-1 text-sm">
            {rows.map(([label, value, key]) => (
              <div key={key} className="contents" data-derived={key}>
                <dt className="text-muted">{label}</dt>
                <dd className="text-right font-mono">{value}</dd>
              </div>
            ))}
          </dl>
          <GainMeter gain={derived.onAxisGain} optimum={derived.optimumGain} />
          <p className="mt-3 text-xs text-muted">
            g(α) = 2(1 − e^(−α²))²/α² is the on-axis far-field gain of the clipped Gaussian beam relative to a uniformly
            filled aperture (Klein and Degnan 1974). A Fresnel number far below 1 means the far-field approximation holds.
          </p>
        </>
      )}
    </aside>
  );
}

function GainMeter({ gain, optimum }: { gain: number; optimum: number }) {
  const percent = Math.max(0, Math.min(100, (gain / optimum) * 100));
  return (
    <div className="mt-3">
      <div className="flex justify-between text-xs text-muted">
        <span>gain / optimum</span>
        <span className="font-mono">{formatNumber(percent, 3)} %</span>
      </div>
      <div className="mt-1 h-2 rounded-sm bg-sunken" aria-hidden="true">
        <div className="h-2 rounded-sm bg-accent" style={{ width: `${percent}%` }} />
      </div>
    </div>
  );
}
