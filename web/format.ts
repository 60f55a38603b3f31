/** Number formatting for the tooltip and the tables: "unknown" for missing values, never "NaN". */
export const UNKNOWN = "unknown";

export function fixed(v: number, digits: number): string {
  return Number.isFinite(v) ? v.toFixed(digits) : UNKNOWN;
}

export function withError(v: number, e: number, digits: number): string {
  if (!Number.isFinite(v)) return UNKNOWN;
  return Number.isFinite(e) ? `${v.toFixed(digits)} ± ${e.toFixed(digits)}` : v.toFixed(digits);
}

export function signed(v: number, digits: number): string {
  if (!Number.isFinite(v)) return UNKNOWN;
  return (v > 0 ? "+" : "") + v.toFixed(digits);
}
