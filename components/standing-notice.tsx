export const STANDING_NOTICE =
  "Surrogate results are engineering estimates within the model's validity range; decisions about flight hardware rest on the exact calculation and the mission's own review.";

export function StandingNotice() {
  return <p className="text-xs text-muted">{STANDING_NOTICE}</p>;
}
