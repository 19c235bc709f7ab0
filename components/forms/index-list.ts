/**
 * Reads a Zernike index list as people type it: "4-36", "4, 5, 6", "4-8 11 15-16". Returns null when the text is not
 * such a list (the shared schema then reports it), so that the one rule for valid indices stays in lib/validation.
 */
export function parseIndexList(text: string): number[] | null {
  const parts = text.split(/[\s,;]+/).filter((p) => p !== "");
  if (parts.length === 0) return null;
  const out: number[] = [];
  for (const part of parts) {
    const range = /^(\d+)\s*[-–]\s*(\d+)$/.exec(part);
    if (range) {
      const from = Number(range[1]);
      const to = Number(range[2]);
      if (to < from || to - from > 1000) return null;
      for (let j = from; j <= to; j++) out.push(j);
    } else if (/^\d+$/.test(part)) {
      out.push(Number(part));
    } else {
      return null;
    }
  }
  return out;
}
