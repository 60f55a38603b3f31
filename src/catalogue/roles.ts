/**
 * Column roles from names, UCDs and units. Each candidate (role, column) gets a score:
 *   override 1000 > UCD with meta.main 100 > exact common name 80 > UCD 70 > weak name 40,
 *   +5 when the unit confirms the role; a unit that contradicts the role removes the candidate.
 * Pairs are taken best score first, each role and each column at most once; equal scores go to the
 * column that comes first in the file. Every role with more than one candidate is reported in the
 * notes with the rule that decided. Columns that look like redshifts or velocities in another rest
 * frame (zcmb, vcmb, vlg, ...) are never taken as heliocentric cz or z; a note says so.
 * UCD words: IVOA UCD1+ vocabulary (pos.eq.ra, src.redshift, spect.dopplerVeloc.opt, phot.mag.distMod,
 * pos.distance, stat.error, meta.id, meta.main).
 */
import type { Table } from "apache-arrow";
import { PeculiarError } from "../errors.js";
import { columnMeta } from "./columns.js";
import { INVALID_REASON, ROLES, SOURCE_ROW, VALID, type Role, type RoleMap } from "./meta.js";
import { isDistanceUnit, isVelocityUnit } from "./units.js";

export interface RoleDetection {
  roles: RoleMap;
  notes: string[];
}

/** What a unit string measures, as far as roles care. */
export type UnitClass = "angle" | "velocity" | "mag" | "length" | "dimensionless" | "dex" | "other" | "none";

export function unitClass(unit: string | undefined): UnitClass {
  if (unit === undefined) return "none";
  const u = unit.trim().replace(/^["']|["']$/g, "").toLowerCase().replace(/\s+/g, "");
  if (u === "") return "none";
  if (["-", "---", "1", "dimensionless", "redshift", "z"].includes(u)) return "dimensionless";
  if (/^(deg|degree|degrees|°|rad|radian|radians|h|hr|hour|hours|hourangle|h:m:s|d:m:s|hms|dms|arcsec|arcmin|mas|"h:m:s"|"d:m:s")$/.test(u)) return "angle";
  if (isVelocityUnit(u)) return "velocity";
  if (/^(mag|mags|magnitude)$/.test(u)) return "mag";
  if (isDistanceUnit(u)) return "length";
  if (/^(dex|log|\[-\])$/.test(u)) return "dex";
  return "other";
}

/** Unit classes each role accepts ("none" = no unit given, always accepted). */
const ROLE_UNITS: Record<Role, UnitClass[]> = {
  id: ["none", "dimensionless", "other"],
  ra: ["angle"],
  dec: ["angle"],
  ra_err: ["angle"],
  dec_err: ["angle"],
  pos_err: ["angle"],
  cz: ["velocity"],
  cz_err: ["velocity"],
  z: ["dimensionless"],
  z_err: ["dimensionless"],
  mu: ["mag"],
  mu_err: ["mag"],
  dist: ["length"],
  dist_err: ["length"],
  eta: ["dex", "dimensionless"],
  eta_err: ["dex", "dimensionless"],
  v_pec: ["velocity"],
  v_pec_err: ["velocity"],
  glon: ["angle"],
  glat: ["angle"],
  group: ["none", "dimensionless", "other"],
};

const SCORE_OVERRIDE = 1000;
const SCORE_UCD_MAIN = 100;
const SCORE_NAME = 80;
const SCORE_UCD = 70;
const SCORE_WEAK_NAME = 40;
const SCORE_UNIT_BONUS = 5;

/** Lower case with everything but letters and digits removed: "RA_deg" -> "radeg", "e_mu" -> "emu". */
function key(name: string): string {
  return name.toLowerCase().replace(/[^a-z0-9]/g, "");
}

// Common names (keys as made by key()), from common practice and the CDS examples in the domain
// reference §12.1. Strong names score SCORE_NAME, weak ones SCORE_WEAK_NAME.
const STRONG: Partial<Record<Role, string[]>> = {
  id: ["id", "name", "objname", "objectname", "object", "objid", "objectid", "sourceid", "srcid", "galid", "galaxyid", "designation", "identifier", "galaxy"],
  ra: ["ra", "raj2000", "ra2000", "raicrs", "radeg", "rad2000", "rarad", "rahours", "rahr", "rahms", "rasex", "alpha", "alphaj2000", "rightascension"],
  dec: ["dec", "decl", "dej2000", "decj2000", "de2000", "dec2000", "deicrs", "decicrs", "dedeg", "decdeg", "decrad", "decdms", "decsex", "dedms", "delta", "deltaj2000", "declination"],
  ra_err: ["era", "raerr", "sigra", "sigmara", "eraj2000", "raerror", "eraicrs", "eradeg"],
  dec_err: ["edec", "ede", "decerr", "deerr", "sigdec", "sigmadec", "edej2000", "decerror", "edeicrs", "edecicrs", "edecdeg"],
  pos_err: ["epos", "poserr", "errpos", "sigpos", "positionerror", "eradec"],
  cz: ["cz", "czhel", "czhelio", "vhel", "vhelio", "vh", "hrv", "vhelio", "heliocentricvelocity", "czkms", "vhelkms", "vr", "rv", "vrad"],
  cz_err: ["ecz", "czerr", "czerror", "evhel", "vhelerr", "evhelio", "vhelioerr", "ehrv", "hrverr", "sigcz", "sigmacz", "evr", "erv", "rverr"],
  z: ["z", "zhel", "zhelio", "zhelio", "redshift", "zspec", "zobs", "zh"],
  z_err: ["ez", "zerr", "zerror", "ezhel", "zhelerr", "sigz", "sigmaz", "ezspec", "zspecerr", "redshifterr", "eredshift"],
  mu: ["mu", "dm", "distmod", "distancemodulus", "mu0", "dmod", "mm", "mum"],
  mu_err: ["emu", "muerr", "edm", "dmerr", "edistmod", "distmoderr", "sigmu", "sigmamu", "emu0", "edmod", "emm"],
  dist: ["dist", "distmpc", "distance", "dmpc", "dl", "dlum", "lumdist", "distancempc"],
  dist_err: ["edist", "disterr", "distmpcerr", "edistmpc", "ed", "derr", "disterrmpc", "edistance", "distanceerr"],
  eta: ["eta", "logdr", "logdistratio", "logdistanceratio"],
  eta_err: ["eeta", "etaerr", "elogdr", "logdrerr", "sigeta"],
  v_pec: ["vpec", "vpeculiar", "peculiarvelocity", "pv", "vp"],
  v_pec_err: ["vpecerr", "evpec", "pverr", "epv", "vperr", "evp"],
  glon: ["glon", "lii", "gall", "galon", "lgal"],
  glat: ["glat", "bii", "galb", "galat", "bgal"],
  group: ["group", "groupid", "grp", "grpid", "gid", "fofid"],
};
const WEAK: Partial<Record<Role, string[]>> = {
  cz: ["v", "vel", "velocity", "vopt", "czopt"],
  dist: ["d"],
  glon: ["l"],
  glat: ["b"],
  id: ["num", "no", "seq", "recno"],
};

/** Weak names taken only when the unit confirms the role ("d" in Mpc is a distance). */
const WEAK_NEEDS_UNIT = new Set(["d"]);

/** Names of velocities/redshifts in a frame other than heliocentric: never auto-detected as cz or z. */
const OTHER_FRAME = /^(cz|v|vel|z)_?(cmb|lg|gsr|lsr|3k|gal|cosmo|cos|mod|corr)$|^(vcmb|vlg|vgsr|vlsr|v3k|zcmb|zlg|czcmb|czlg|vls|zcosmo|zcos)$/i;

interface Candidate {
  role: Role;
  column: string;
  index: number;
  score: number;
  why: string;
}

function ucdCandidates(ucd: string): { role: Role; main: boolean }[] {
  const words = ucd.toLowerCase().split(";").map((w) => w.trim()).filter(Boolean);
  if (words.length === 0) return [];
  const main = words.includes("meta.main");
  const isError = words[0]!.startsWith("stat.error") || words[0]!.startsWith("stat.stdev");
  const body = isError ? words.slice(1) : words;
  const has = (p: string) => body.some((w) => w === p || w.startsWith(p + "."));
  const out: { role: Role; main: boolean }[] = [];
  const add = (plain: Role, err: Role) => out.push({ role: isError ? err : plain, main });
  if (has("pos.eq.ra")) add("ra", "ra_err");
  else if (has("pos.eq.dec")) add("dec", "dec_err");
  else if (has("pos.galactic.lon")) out.push(...(isError ? [] : [{ role: "glon" as Role, main }]));
  else if (has("pos.galactic.lat")) out.push(...(isError ? [] : [{ role: "glat" as Role, main }]));
  else if (has("src.redshift")) add("z", "z_err");
  else if (has("spect.dopplerveloc") || (has("phys.veloc") && body.some((w) => w.startsWith("pos.heliocentric")))) add("cz", "cz_err");
  else if (has("phot.mag.distmod")) add("mu", "mu_err");
  else if (has("pos.distance")) add("dist", "dist_err");
  else if (isError && body.length === 1 && body[0] === "pos") out.push({ role: "pos_err", main });
  else if (!isError && has("meta.id") && !body.some((w) => w.startsWith("meta.id.") && w !== "meta.id")) out.push({ role: "id", main });
  return out;
}

/** Candidate roles of one column. `notes` collects unit contradictions and other-frame columns. */
function candidatesOf(table: Table, column: string, index: number, notes: string[]): Candidate[] {
  const meta = columnMeta(table, column);
  const uclass = unitClass(meta.unit);
  const out: Candidate[] = [];
  const k = key(column);
  if (OTHER_FRAME.test(k) || OTHER_FRAME.test(column)) {
    notes.push(`column ${column} looks like a redshift or velocity in another rest frame; not used as heliocentric cz or z (use --col cz=${column} or --col z=${column} to use it)`);
    return out;
  }
  if (meta.ucd) {
    for (const c of ucdCandidates(meta.ucd)) out.push({ role: c.role, column, index, score: c.main ? SCORE_UCD_MAIN : SCORE_UCD, why: `UCD ${meta.ucd}` });
  }
  for (const role of ROLES) {
    if (STRONG[role]?.includes(k)) out.push({ role, column, index, score: SCORE_NAME, why: "name" });
    else if (WEAK[role]?.includes(k) && (!WEAK_NEEDS_UNIT.has(k) || ROLE_UNITS[role].includes(uclass))) {
      out.push({ role, column, index, score: SCORE_WEAK_NAME, why: "name" });
    }
  }
  // A redshift-named column in km/s is a velocity (cz); a velocity-named column without unit in km/s stays cz.
  for (const c of out) {
    if (c.role === "z" && uclass === "velocity") {
      c.role = "cz";
      c.why += " with unit km/s";
    } else if (c.role === "z_err" && uclass === "velocity") {
      c.role = "cz_err";
      c.why += " with unit km/s";
    }
  }
  const kept: Candidate[] = [];
  for (const c of out) {
    const allowed = ROLE_UNITS[c.role];
    if (uclass === "none" || allowed.includes(uclass)) {
      if (uclass !== "none" && uclass !== "other") c.score += SCORE_UNIT_BONUS;
      kept.push(c);
    } else {
      notes.push(`column ${column} is named like ${c.role} but its unit "${meta.unit}" does not fit; not used as ${c.role}`);
    }
  }
  // One column, one role per source of evidence: keep the best candidate per role.
  const best = new Map<Role, Candidate>();
  for (const c of kept) {
    const b = best.get(c.role);
    if (!b || c.score > b.score) best.set(c.role, c);
  }
  return [...best.values()];
}

const BOOKKEEPING = new Set([VALID, INVALID_REASON, SOURCE_ROW]);

/** Which error role belongs to which value role: an error column without its value is reported. */
const ERROR_OF: Partial<Record<Role, Role>> = {
  ra_err: "ra",
  dec_err: "dec",
  cz_err: "cz",
  z_err: "z",
  mu_err: "mu",
  dist_err: "dist",
  eta_err: "eta",
  v_pec_err: "v_pec",
};

/**
 * Detects the role of each column. `overrides` (from --col ROLE=NAME) win; an empty name unsets a
 * role. An override naming a column the table lacks throws PeculiarError("column") listing the columns.
 */
export function detectRoles(table: Table, overrides: RoleMap = {}, file?: string): RoleDetection {
  const names = table.schema.fields.map((f) => f.name);
  const notes: string[] = [];
  const roles: RoleMap = {};
  const taken = new Set<string>();
  const fixed = new Set<Role>();
  for (const [role, column] of Object.entries(overrides) as [Role, string | undefined][]) {
    if (column === undefined) continue;
    if (!(ROLES as readonly string[]).includes(role)) {
      throw new PeculiarError("usage", `unknown column role '${role}'`, { expected: `one of ${ROLES.join(", ")}` });
    }
    fixed.add(role);
    if (column === "") continue;
    if (!names.includes(column)) {
      throw new PeculiarError("column", `--col ${role}=${column}: no such column`, {
        ...(file !== undefined ? { file } : {}),
        expected: `one of ${names.join(", ")}`,
      });
    }
    if (taken.has(column)) notes.push(`column ${column} is given for more than one role`);
    roles[role] = column;
    taken.add(column);
  }
  const all: Candidate[] = [];
  names.forEach((name, index) => {
    if (BOOKKEEPING.has(name) || taken.has(name)) return;
    all.push(...candidatesOf(table, name, index, notes));
  });
  // By role: list the candidates for the ambiguity notes.
  const byRole = new Map<Role, Candidate[]>();
  for (const c of all) {
    if (fixed.has(c.role)) continue;
    const list = byRole.get(c.role) ?? [];
    list.push(c);
    byRole.set(c.role, list);
  }
  const order = all.filter((c) => !fixed.has(c.role)).sort((a, b) => b.score - a.score || a.index - b.index);
  for (const c of order) {
    if (roles[c.role] !== undefined || taken.has(c.column)) continue;
    roles[c.role] = c.column;
    taken.add(c.column);
  }
  for (const [role, list] of byRole) {
    const chosen = roles[role];
    const others = list.filter((c) => c.column !== chosen);
    if (others.length === 0 || chosen === undefined) continue;
    const win = list.find((c) => c.column === chosen)!;
    const tied = others.some((c) => c.score === win.score);
    const rule = tied ? "the first in the file" : `${win.why} beats ${others.map((o) => `${o.why} (${o.column})`).join(", ")}`;
    notes.push(`${role}: candidates ${list.map((c) => c.column).join(", ")}; chose ${chosen} (${rule}); override with --col ${role}=NAME`);
  }
  // Galactic coordinates only as a pair.
  if ((roles.glon === undefined) !== (roles.glat === undefined)) {
    const lone = roles.glon ?? roles.glat;
    if (!fixed.has("glon") && !fixed.has("glat")) {
      notes.push(`column ${lone} looks like a Galactic coordinate but has no partner; not used`);
      delete roles.glon;
      delete roles.glat;
    }
  }
  for (const [err, value] of Object.entries(ERROR_OF) as [Role, Role][]) {
    if (roles[err] !== undefined && roles[value] === undefined) notes.push(`${err} <- ${roles[err]} has no ${value} column beside it`);
  }
  if (roles.cz !== undefined && roles.z !== undefined) notes.push(`both cz (${roles.cz}) and z (${roles.z}) are present; steps that need one velocity use cz`);
  return { roles: ordered(roles), notes };
}

/** The roles in ROLES order, for stable printing and metadata. */
function ordered(roles: RoleMap): RoleMap {
  const out: RoleMap = {};
  for (const r of ROLES) if (roles[r] !== undefined) out[r] = roles[r];
  return out;
}

/** "ra <- RAJ2000 (h), dec <- DEJ2000 (deg), cz <- cz (km/s)": the role choice as one line. */
export function describeRoles(table: Table, roles: RoleMap, units: Partial<Record<Role, string>> = {}): string {
  const parts: string[] = [];
  for (const r of ROLES) {
    const c = roles[r];
    if (c === undefined) continue;
    const unit = units[r] ?? columnMeta(table, c).unit;
    parts.push(`${r} <- ${c}${unit ? ` (${unit})` : ""}`);
  }
  return parts.length ? parts.join(", ") : "no column roles detected";
}
