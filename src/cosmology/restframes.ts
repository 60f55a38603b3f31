/**
 * Velocity rest frames: heliocentric, local standard of rest (LSR), Galactic standard of rest (GSR),
 * Local Group (LG) and the CMB frame. Each frame is data: the Sun's velocity with respect to it, a
 * vector in Galactic Cartesian coordinates (x toward l = 0, y toward l = 90 deg, z toward the north
 * Galactic pole), built from a published apex with its citation beside it. Frames compose by vector
 * addition (GSR = LSR + circular rotation), never by chaining scalar corrections with different
 * apexes (domain reference §4.1). Adding a frame or an apex means adding one entry to APEXES here.
 *
 * Forms of the correction for a galaxy in direction n (unit vector, Galactic Cartesian), with
 * V the Sun's velocity with respect to the frame and beta = |V|/c:
 *  - "exact" (default): redshifts compose multiplicatively, (1 + z_frame) = (1 + z_helio)/(1 + z_sun),
 *    with the Sun's own Doppler shift toward the galaxy to first order, z_sun = -(V . n)/c
 *    (composition law as in Davis et al. 2011, ApJ 741, 67 and Davis & Scrimgeour 2014, MNRAS 442,
 *    1117). Exact in the composition, first order in V/c for the Sun's motion.
 *  - "relativistic": the same composition with the special-relativistic Doppler factor of the Sun,
 *    1 + z_sun = gamma (1 - V . n / c), n the direction as observed from the Sun (catalogue positions
 *    are heliocentric/barycentric, not corrected for the Sun's motion with respect to the frame).
 *    It differs from "exact" by O(beta^2) (< 0.5 km/s for the CMB dipole): kept for completeness.
 *  - "additive": cz_frame = cz_helio + V . n, the first-order form of older catalogues; it misses the
 *    cross term z V.n (about 18.5 km/s for the CMB at cz = 15 000 km/s, domain reference §4.1).
 * The inverse (frame -> heliocentric) of each form is exact: 1 + z_helio = (1 + z_frame)(1 + z_sun),
 * or cz_helio = cz_frame - V . n.
 */
import { C_KMS } from "./constants.js";
import { DEG, ICRS_TO_GALACTIC, rotate, unitVector, lonLatOf } from "../sky/index.js";
import { PeculiarError } from "../errors.js";

export type VelocityVector = readonly [number, number, number];

/** The velocity frames. "helio" has no apex (the Sun is at rest in it). */
export const VELOCITY_FRAMES = ["helio", "lsr", "gsr", "lg", "cmb"] as const;
export type VelocityFrame = (typeof VELOCITY_FRAMES)[number];

export const FRAME_FORMS = ["exact", "relativistic", "additive"] as const;
export type FrameForm = (typeof FRAME_FORMS)[number];

/** A published motion of the Sun with respect to a frame. */
export interface SolarMotion {
  /** Short name used on the command line (--apex) and in metadata. */
  name: string;
  frame: VelocityFrame;
  /** The Sun's velocity with respect to the frame, km/s, Galactic Cartesian. */
  vectorKmS: VelocityVector;
  /** |vectorKmS| and its direction, for display. */
  speedKmS: number;
  lDeg: number;
  bDeg: number;
  citation: string;
}

function fromApex(speedKmS: number, lDeg: number, bDeg: number): VelocityVector {
  const [x, y, z] = unitVector(lDeg, bDeg);
  return [speedKmS * x, speedKmS * y, speedKmS * z];
}

function add(a: VelocityVector, b: VelocityVector): VelocityVector {
  return [a[0] + b[0], a[1] + b[1], a[2] + b[2]];
}

function motion(name: string, frame: VelocityFrame, vectorKmS: VelocityVector, citation: string): SolarMotion {
  const [lDeg, bDeg] = lonLatOf(vectorKmS[0], vectorKmS[1], vectorKmS[2]);
  return { name, frame, vectorKmS, speedKmS: Math.hypot(...vectorKmS), lDeg, bDeg, citation };
}

/**
 * Solar motion with respect to the LSR, Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829:
 * (U, V, W) = (11.1, 12.24, 7.25) km/s (U toward the Galactic centre, V toward l = 90 deg, W toward
 * the NGP), i.e. 18.04 km/s toward (l, b) = (47.80, +23.69) deg.
 */
export const SUN_LSR_SBD2010: VelocityVector = [11.1, 12.24, 7.25];

/**
 * Circular rotation of the LSR, Theta_0 = 220 km/s toward l = 90 deg (IAU 1985 standard, Kerr &
 * Lynden-Bell 1986, MNRAS 221, 1023; journal reference from memory). GSR = LSR + this vector.
 */
export const LSR_ROTATION_IAU1985: VelocityVector = [0, 220, 0];

/**
 * The Sun's total velocity in the Galactocentric frame, (12.9, 245.6, 7.78) km/s: astropy >= 4.0
 * `Galactocentric` defaults as printed by astropy 8.0.1 (original papers, from memory: Drimmel &
 * Poggio 2018, RNAAS 2, 210; Reid & Brunthaler 2004, ApJ 616, 872; GRAVITY Collaboration 2018).
 */
export const SUN_GSR_ASTROPY4: VelocityVector = [12.9, 245.6, 7.78];

/**
 * CMB solar dipole, Planck 2018 I (Planck Collaboration 2020, A&A 641, A1, Table 2):
 * 369.82 +- 0.11 km/s toward (l, b) = (264.021 +- 0.011, 48.253 +- 0.005) deg.
 */
export const SUN_CMB_PLANCK2018: VelocityVector = fromApex(369.82, 264.021, 48.253);

/**
 * CMB dipole from COBE FIRAS, Fixsen et al. 1996, ApJ 473, 576: Delta T = 3.372 mK on T0 = 2.728 K,
 * v = c Delta T / T0 = 370.6 km/s toward (l, b) = (264.14 +- 0.30, 48.26 +- 0.30) deg.
 */
export const SUN_CMB_FIXSEN1996: VelocityVector = fromApex((C_KMS * 3.372e-3) / 2.728, 264.14, 48.26);

/** Solar motion with respect to the Local Group, Yahil, Tammann & Sandage 1977, ApJ 217, 903: 308 km/s toward (105, -7) deg. */
export const SUN_LG_YTS1977: VelocityVector = fromApex(308, 105, -7);

/** Solar motion with respect to the Local Group, Karachentsev & Makarov 1996, AJ 111, 794: 316 km/s toward (93, -4) deg (values from memory). */
export const SUN_LG_KM1996: VelocityVector = fromApex(316, 93, -4);

/** Solar motion with respect to the Local Group, Courteau & van den Bergh 1999, AJ 118, 337: 306 +- 18 km/s toward (99, -4) deg. */
export const SUN_LG_CVDB1999: VelocityVector = fromApex(306, 99, -4);

/** Every known apex, by name. The first apex of each frame is its default. */
export const APEXES: readonly SolarMotion[] = [
  motion("sbd2010", "lsr", SUN_LSR_SBD2010, "Schoenrich, Binney & Dehnen 2010, MNRAS 403, 1829: (U,V,W) = (11.1, 12.24, 7.25) km/s"),
  motion("sbd2010+iau1985", "gsr", add(SUN_LSR_SBD2010, LSR_ROTATION_IAU1985), "LSR of Schoenrich et al. 2010 plus Theta_0 = 220 km/s toward l = 90 (IAU 1985; Kerr & Lynden-Bell 1986)"),
  motion("astropy4", "gsr", SUN_GSR_ASTROPY4, "astropy >= 4.0 Galactocentric default (12.9, 245.6, 7.78) km/s (Drimmel & Poggio 2018; Reid & Brunthaler 2004)"),
  motion("yts1977", "lg", SUN_LG_YTS1977, "Yahil, Tammann & Sandage 1977, ApJ 217, 903: 308 km/s toward (105, -7)"),
  motion("km1996", "lg", SUN_LG_KM1996, "Karachentsev & Makarov 1996, AJ 111, 794: 316 km/s toward (93, -4)"),
  motion("cvdb1999", "lg", SUN_LG_CVDB1999, "Courteau & van den Bergh 1999, AJ 118, 337: 306 km/s toward (99, -4)"),
  motion("planck2018", "cmb", SUN_CMB_PLANCK2018, "Planck 2018 I, A&A 641, A1: 369.82 km/s toward (264.021, 48.253)"),
  motion("fixsen1996", "cmb", SUN_CMB_FIXSEN1996, "Fixsen et al. 1996, ApJ 473, 576 (COBE FIRAS): 370.6 km/s toward (264.14, 48.26)"),
];

const HELIO: SolarMotion = motion("none", "helio", [0, 0, 0], "the Sun is at rest in the heliocentric frame");
Object.assign(HELIO, { lDeg: NaN, bDeg: NaN });

/**
 * The solar motion for a frame: the named apex (which must belong to the frame), or the frame's
 * default (the first apex listed for it). Throws a usage error for an unknown or mismatched apex.
 */
export function solarMotion(frame: VelocityFrame, apexName?: string): SolarMotion {
  if (!(VELOCITY_FRAMES as readonly string[]).includes(frame)) {
    throw new PeculiarError("usage", "unknown velocity frame", { value: frame, expected: VELOCITY_FRAMES.join(", ") });
  }
  if (frame === "helio") {
    if (apexName !== undefined && apexName !== "none") throw new PeculiarError("usage", "the heliocentric frame has no apex", { value: apexName });
    return HELIO;
  }
  const ofFrame = APEXES.filter((a) => a.frame === frame);
  if (apexName === undefined) return ofFrame[0]!;
  const a = ofFrame.find((x) => x.name === apexName);
  if (!a) throw new PeculiarError("usage", `unknown apex for frame ${frame}`, { value: apexName, expected: ofFrame.map((x) => x.name).join(", ") });
  return a;
}

/** V . n / c for each galaxy: n interleaved unit vectors [x0, y0, z0, ...] in Galactic Cartesian. */
function betaAlong(v: VelocityVector, nGal: Float64Array, i: number): number {
  return (v[0] * nGal[3 * i]! + v[1] * nGal[3 * i + 1]! + v[2] * nGal[3 * i + 2]!) / C_KMS;
}

/** 1 + z_sun for the Sun moving with V toward a galaxy in direction n (see the forms above). */
function onePlusZSun(betaN: number, beta2: number, form: FrameForm): number {
  if (form === "relativistic") return (1 - betaN) / Math.sqrt(1 - beta2);
  return 1 - betaN;
}

/**
 * Heliocentric redshifts to a frame. nGal: interleaved Galactic unit vectors of the galaxies
 * (see galacticUnitVectors). NaN in gives NaN out.
 */
export function helioToFrame(zHelio: ArrayLike<number>, nGal: Float64Array, sun: SolarMotion, form: FrameForm = "exact", out?: Float64Array): Float64Array {
  const n = zHelio.length;
  const res = out ?? new Float64Array(n);
  const v = sun.vectorKmS;
  const beta2 = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]) / (C_KMS * C_KMS);
  for (let i = 0; i < n; i++) {
    const bn = betaAlong(v, nGal, i);
    const z = zHelio[i]!;
    res[i] = form === "additive" ? z + bn : (1 + z) / onePlusZSun(bn, beta2, form) - 1;
  }
  return res;
}

/** The inverse of helioToFrame: redshifts in a frame back to heliocentric. */
export function frameToHelio(zFrame: ArrayLike<number>, nGal: Float64Array, sun: SolarMotion, form: FrameForm = "exact", out?: Float64Array): Float64Array {
  const n = zFrame.length;
  const res = out ?? new Float64Array(n);
  const v = sun.vectorKmS;
  const beta2 = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]) / (C_KMS * C_KMS);
  for (let i = 0; i < n; i++) {
    const bn = betaAlong(v, nGal, i);
    const z = zFrame[i]!;
    res[i] = form === "additive" ? z - bn : (1 + z) * onePlusZSun(bn, beta2, form) - 1;
  }
  return res;
}

/** Interleaved Galactic Cartesian unit vectors of ICRS positions (degrees). NaN in gives NaN out. */
export function galacticUnitVectors(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>): Float64Array {
  const n = raDeg.length;
  const out = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    const a = raDeg[i]! * DEG;
    const d = decDeg[i]! * DEG;
    const c = Math.cos(d);
    const [x, y, z] = rotate(ICRS_TO_GALACTIC, c * Math.cos(a), c * Math.sin(a), Math.sin(d));
    out[3 * i] = x;
    out[3 * i + 1] = y;
    out[3 * i + 2] = z;
  }
  return out;
}

export interface FrameSpec {
  frame: VelocityFrame;
  /** Apex name; the frame's default when absent. */
  apex?: string;
}

/**
 * Redshifts of galaxies at ICRS (ra, dec) from one frame to another, through the heliocentric
 * frame (each frame's solar motion applied once, so chains never mix apexes).
 */
export function convertRedshifts(
  z: ArrayLike<number>,
  raDeg: ArrayLike<number>,
  decDeg: ArrayLike<number>,
  from: FrameSpec,
  to: FrameSpec,
  form: FrameForm = "exact",
): Float64Array {
  const nGal = galacticUnitVectors(raDeg, decDeg);
  const zh = from.frame === "helio" ? Float64Array.from(z) : frameToHelio(z, nGal, solarMotion(from.frame, from.apex), form);
  return to.frame === "helio" ? zh : helioToFrame(zh, nGal, solarMotion(to.frame, to.apex), form);
}

/** cz in km/s from z and back: the catalogue convention cz = c z (not a physical velocity). */
export function czOfZ(z: ArrayLike<number>): Float64Array {
  const out = new Float64Array(z.length);
  for (let i = 0; i < z.length; i++) out[i] = C_KMS * z[i]!;
  return out;
}

export function zOfCz(czKmS: ArrayLike<number>): Float64Array {
  const out = new Float64Array(czKmS.length);
  for (let i = 0; i < czKmS.length; i++) out[i] = czKmS[i]! / C_KMS;
  return out;
}
