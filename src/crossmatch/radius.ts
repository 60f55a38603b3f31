/**
 * Angles with units as the user writes them: "2arcsec", "0.5arcmin", "1e-3deg", "300mas".
 * A bare number is refused: a radius without a unit is the commonest cross-match mistake.
 */
import { PeculiarError } from "../errors.js";

const UNIT_ARCSEC: Record<string, number> = {
  mas: 1e-3,
  arcsec: 1,
  asec: 1,
  '"': 1,
  arcmin: 60,
  amin: 60,
  "'": 60,
  deg: 3600,
  d: 3600,
};

/** Parses an angle with a unit into arcseconds. `what` names the option in the error (e.g. "--radius"). */
export function parseAngleArcsec(text: string, what = "angle"): number {
  const m = /^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:e[+-]?\d+)?)\s*([a-z"']*)\s*$/i.exec(text);
  const expected = "a number with a unit, e.g. 2arcsec, 0.5arcmin, 1e-3deg, 300mas";
  if (!m) throw new PeculiarError("usage", `${what}: not an angle`, { value: text, expected });
  const x = Number(m[1]);
  const unit = (m[2] ?? "").toLowerCase();
  if (unit === "") throw new PeculiarError("usage", `${what}: the angle needs a unit`, { value: text, expected });
  const f = UNIT_ARCSEC[unit];
  if (f === undefined) throw new PeculiarError("usage", `${what}: unknown angle unit "${m[2]}"`, { value: text, expected: "mas, arcsec, arcmin or deg" });
  if (!Number.isFinite(x)) throw new PeculiarError("usage", `${what}: the number is too large to hold`, { value: text, expected });
  if (x < 0) throw new PeculiarError("usage", `${what}: the angle must be >= 0`, { value: text, expected });
  const arcsec = x * f;
  if (arcsec > 180 * 3600) throw new PeculiarError("usage", `${what}: the angle is more than 180 degrees`, { value: text, expected: "at most 180deg" });
  return arcsec;
}

/** Formats arcseconds back with the unit that reads best (round trip with parseAngleArcsec). */
export function formatAngleArcsec(arcsec: number): string {
  if (arcsec >= 3600) return `${arcsec / 3600}deg`;
  if (arcsec >= 60) return `${arcsec / 60}arcmin`;
  if (arcsec < 0.1 && arcsec > 0) return `${arcsec * 1000}mas`;
  return `${arcsec}arcsec`;
}
