/** Number formats for dense engineering tables: fixed significant digits, exponents only for very large or small values. */
export function formatNumber(value: number | null | undefined, significant = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "–";
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude >= 1e6 || magnitude < 1e-3) return value.toExponential(significant - 1).replace("e+", "e");
  return Number(value.toPrecision(significant)).toString();
}

/** "2026-12-01 20:59" (UTC) from an ISO time. */
export function formatTime(iso: string | null | undefined, seconds = false): string {
  if (!iso) return "–";
  return iso.slice(0, seconds ? 19 : 16).replace("T", " ");
}

/** "1 min 05 s", "12 s". */
export function formatDuration(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return "–";
  const s = Math.round(seconds);
  if (s < 60) return `${s} s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m} min ${String(s % 60).padStart(2, "0")} s`;
  return `${Math.floor(m / 60)} h ${String(m % 60).padStart(2, "0")} min`;
}

/** A Noll (or ANSI) index list written compactly: "4-36", "4-8, 11, 15-16". */
export function formatIndexList(indices: readonly number[]): string {
  const parts: string[] = [];
  let i = 0;
  while (i < indices.length) {
    let j = i;
    while (j + 1 < indices.length && indices[j + 1] === indices[j] + 1) j++;
    parts.push(j > i ? `${indices[i]}-${indices[j]}` : `${indices[i]}`);
    i = j + 1;
  }
  return parts.join(", ");
}

/** A surrogate term by its coefficient's name: the constant "C", a linear term "A_5", a product "B_5,7". */
export function formatTerm(term: readonly number[]): string {
  return term.length === 0 ? "C" : term.length === 1 ? `A_${term[0]}` : `B_${term.join(",")}`;
}
