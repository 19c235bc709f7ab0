import { SURROGATE_NOTICE } from "@/lib/surrogate/model";

/** The product's notice on surrogate results, shown on every page (the one constant in lib/surrogate/model.ts). */
export function StandingNotice() {
  return <p className="text-xs text-muted">{SURROGATE_NOTICE}</p>;
}
