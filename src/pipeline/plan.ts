/**
 * The plan of a whole job: which catalogues go in, the settings of each step, and (optionally)
 * the truth of a mock to compare with. A plan is a JSON file; paths in it are relative to the
 * plan's own folder. `parsePlan` checks every key and value and says where a mistake is
 * (file, key path, what was expected); unknown keys are errors, so a typo never goes unseen.
 *
 * The steps always run in this order; a step set to `false` is skipped (and so is every step
 * that needs its output).
 */
import { dirname, isAbsolute, resolve } from "node:path";
import { PeculiarError } from "../errors.js";
import { parseAngleArcsec } from "../crossmatch/radius.js";

export const PLAN_FORMAT = "peculiar-plan/1";
export const STEP_NAMES = ["match", "combine", "velocities", "flag", "groups", "flow", "recentre"] as const;
export type StepName = (typeof STEP_NAMES)[number];

export interface InputSpec {
  /** Absolute after parsing. */
  file: string;
  /** Short name used in column prefixes, file names and the report; default: the file's stem. */
  alias: string;
  /** Format override (csv, tsv, votable, fits, arrow); from the extension when absent. */
  format?: string;
  /** Column roles named explicitly: role -> column name (as `--col ROLE=NAME`). */
  columns: Record<string, string>;
}

export interface MatchSettings {
  /** With a unit: "3arcsec", "0.05arcmin", "1e-3deg", "300mas". */
  radius: string;
  select: "nearest" | "one-to-one";
  /** km/s; pairs whose velocities differ by more are rejected (needs a velocity on both sides). */
  maxDvKmS?: number;
}
export interface CombineSettings {
  /** Alias of the distance catalogue whose zero point the others are brought to; default the first. */
  reference?: string;
  /** Apply the measured offsets before combining (default true). */
  applyOffsets: boolean;
}
export interface VelocitiesSettings {
  frame: "helio" | "lsr" | "gsr" | "lg" | "cmb";
  apex?: string;
  h0: number;
  omegaM: number;
  estimator: "exact" | "linear" | "log";
}
export interface FlagSettings {
  method: "clip" | "mad";
  kappa: number;
  sigmaStarKmS: number;
}
export interface GroupsSettings {
  /** How the linking lengths grow with distance: Huchra & Geller 1982 ("hg82") or not at all. */
  scaling: "hg82" | "constant";
  /** Projected linking length at the fiducial velocity, Mpc (default 0.52 h^-1 Mpc at the plan's H0). */
  linkMpc?: number;
  /** Velocity linking length at the fiducial velocity, km/s. */
  linkKmS?: number;
  /** Smallest group reported in the summary. */
  minMembers: number;
}
export interface FlowSettings {
  sigmaStarKmS: number;
  maxDistMpc?: number;
}
export interface RecentreSettings {
  /** "group:richest", "group:ID", "id:NAME", or "RA,DEC,DIST" (deg, deg, Mpc). */
  on: string;
}

export interface StepSettings {
  match: MatchSettings;
  combine: CombineSettings;
  velocities: VelocitiesSettings;
  flag: FlagSettings;
  groups: GroupsSettings;
  flow: FlowSettings;
  recentre: RecentreSettings;
}

export interface Plan {
  /** The plan file (absolute) or "<inline>". */
  file: string;
  title: string;
  redshifts: InputSpec;
  distances: InputSpec[];
  /** Absolute path of a truth JSON (as written by the sample generator), if any. */
  truth?: string;
  /** Settings per step; a skipped step is absent from `enabled`. */
  steps: StepSettings;
  enabled: Set<StepName>;
}

export const DEFAULT_STEPS: StepSettings = {
  match: { radius: "3arcsec", select: "one-to-one" },
  combine: { applyOffsets: true },
  velocities: { frame: "cmb", h0: 70, omegaM: 0.3, estimator: "exact" },
  flag: { method: "clip", kappa: 3.5, sigmaStarKmS: 250 },
  groups: { scaling: "hg82", minMembers: 5 },
  flow: { sigmaStarKmS: 250 },
  recentre: { on: "group:richest" },
};

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };
type Obj = { [k: string]: Json };

class Checker {
  constructor(readonly file: string) {}
  fail(path: string, message: string, value?: unknown, expected?: string): never {
    throw new PeculiarError("input", `plan key ${path || "(top)"}: ${message}`, { file: this.file, value, expected });
  }
  obj(v: Json | undefined, path: string): Obj {
    if (v === null || typeof v !== "object" || Array.isArray(v)) this.fail(path, "must be an object", v);
    return v;
  }
  keys(o: Obj, path: string, allowed: string[]): void {
    for (const k of Object.keys(o)) if (!allowed.includes(k)) this.fail(path ? `${path}.${k}` : k, "unknown key", undefined, `one of ${allowed.join(", ")}`);
  }
  str(v: Json | undefined, path: string): string {
    if (typeof v !== "string" || v.trim() === "") this.fail(path, "must be a non-empty string", v);
    return v;
  }
  num(v: Json | undefined, path: string, ok: (x: number) => boolean, expected: string): number {
    if (typeof v !== "number" || !Number.isFinite(v) || !ok(v)) this.fail(path, "bad number", v, expected);
    return v;
  }
  oneOf<T extends string>(v: Json | undefined, path: string, options: readonly T[]): T {
    if (typeof v !== "string" || !(options as readonly string[]).includes(v)) this.fail(path, "bad value", v, options.join(", "));
    return v as T;
  }
  bool(v: Json | undefined, path: string): boolean {
    if (typeof v !== "boolean") this.fail(path, "must be true or false", v);
    return v;
  }
}

function stem(file: string): string {
  const b = file.split(/[\\/]/).pop() ?? file;
  const i = b.indexOf(".");
  return i > 0 ? b.slice(0, i) : b;
}

function input(c: Checker, v: Json | undefined, path: string, base: string): InputSpec {
  const o = c.obj(v, path);
  c.keys(o, path, ["file", "alias", "format", "columns"]);
  const rel = c.str(o.file, `${path}.file`);
  const file = isAbsolute(rel) ? rel : resolve(base, rel);
  const alias = o.alias === undefined ? stem(rel) : c.str(o.alias, `${path}.alias`);
  if (!/^[A-Za-z][A-Za-z0-9_]*$/.test(alias)) c.fail(`${path}.alias`, "must be a word (letters, digits, _), starting with a letter", alias);
  const spec: InputSpec = { file, alias, columns: {} };
  if (o.format !== undefined) spec.format = c.oneOf(o.format, `${path}.format`, ["csv", "tsv", "votable", "fits", "arrow"]);
  if (o.columns !== undefined) {
    const cols = c.obj(o.columns, `${path}.columns`);
    for (const [role, name] of Object.entries(cols)) spec.columns[role] = c.str(name, `${path}.columns.${role}`);
  }
  return spec;
}

const pos = (x: number) => x > 0;
const nonNeg = (x: number) => x >= 0;

function stepSettings(c: Checker, name: StepName, v: Json, path: string): StepSettings[StepName] {
  const o = c.obj(v, path);
  switch (name) {
    case "match": {
      c.keys(o, path, ["radius", "select", "maxDvKmS"]);
      const s: MatchSettings = { ...DEFAULT_STEPS.match };
      if (o.radius !== undefined) {
        s.radius = c.str(o.radius, `${path}.radius`);
        try {
          if (!(parseAngleArcsec(s.radius, "radius") > 0)) c.fail(`${path}.radius`, "must be more than 0", s.radius);
        } catch (e) {
          if (e instanceof PeculiarError && e.code === "usage") c.fail(`${path}.radius`, e.message.replace(/^radius: /, "").replace(/ \(got.*$/, ""), s.radius, "e.g. 3arcsec, 0.05arcmin, 1e-3deg, 300mas");
          throw e;
        }
      }
      if (o.select !== undefined) s.select = c.oneOf(o.select, `${path}.select`, ["nearest", "one-to-one"] as const);
      if (o.maxDvKmS !== undefined) s.maxDvKmS = c.num(o.maxDvKmS, `${path}.maxDvKmS`, pos, "km/s > 0");
      return s;
    }
    case "combine": {
      c.keys(o, path, ["reference", "applyOffsets"]);
      const s: CombineSettings = { ...DEFAULT_STEPS.combine };
      if (o.reference !== undefined) s.reference = c.str(o.reference, `${path}.reference`);
      if (o.applyOffsets !== undefined) s.applyOffsets = c.bool(o.applyOffsets, `${path}.applyOffsets`);
      return s;
    }
    case "velocities": {
      c.keys(o, path, ["frame", "apex", "h0", "omegaM", "estimator"]);
      const s: VelocitiesSettings = { ...DEFAULT_STEPS.velocities };
      if (o.frame !== undefined) s.frame = c.oneOf(o.frame, `${path}.frame`, ["helio", "lsr", "gsr", "lg", "cmb"] as const);
      if (o.apex !== undefined) s.apex = c.str(o.apex, `${path}.apex`);
      if (o.h0 !== undefined) s.h0 = c.num(o.h0, `${path}.h0`, pos, "km/s/Mpc > 0");
      if (o.omegaM !== undefined) s.omegaM = c.num(o.omegaM, `${path}.omegaM`, (x) => x >= 0 && x <= 1, "0..1");
      if (o.estimator !== undefined) s.estimator = c.oneOf(o.estimator, `${path}.estimator`, ["exact", "linear", "log"] as const);
      return s;
    }
    case "flag": {
      c.keys(o, path, ["method", "kappa", "sigmaStarKmS"]);
      const s: FlagSettings = { ...DEFAULT_STEPS.flag };
      if (o.method !== undefined) s.method = c.oneOf(o.method, `${path}.method`, ["clip", "mad"] as const);
      if (o.kappa !== undefined) s.kappa = c.num(o.kappa, `${path}.kappa`, pos, "> 0");
      if (o.sigmaStarKmS !== undefined) s.sigmaStarKmS = c.num(o.sigmaStarKmS, `${path}.sigmaStarKmS`, nonNeg, "km/s >= 0");
      return s;
    }
    case "groups": {
      c.keys(o, path, ["scaling", "linkMpc", "linkKmS", "minMembers"]);
      const s: GroupsSettings = { ...DEFAULT_STEPS.groups };
      if (o.scaling !== undefined) s.scaling = c.oneOf(o.scaling, `${path}.scaling`, ["hg82", "constant"] as const);
      if (o.linkMpc !== undefined) s.linkMpc = c.num(o.linkMpc, `${path}.linkMpc`, pos, "Mpc > 0");
      if (o.linkKmS !== undefined) s.linkKmS = c.num(o.linkKmS, `${path}.linkKmS`, pos, "km/s > 0");
      if (o.minMembers !== undefined) s.minMembers = c.num(o.minMembers, `${path}.minMembers`, (x) => Number.isInteger(x) && x >= 2, "an integer >= 2");
      return s;
    }
    case "flow": {
      c.keys(o, path, ["sigmaStarKmS", "maxDistMpc"]);
      const s: FlowSettings = { ...DEFAULT_STEPS.flow };
      if (o.sigmaStarKmS !== undefined) s.sigmaStarKmS = c.num(o.sigmaStarKmS, `${path}.sigmaStarKmS`, nonNeg, "km/s >= 0");
      if (o.maxDistMpc !== undefined) s.maxDistMpc = c.num(o.maxDistMpc, `${path}.maxDistMpc`, pos, "Mpc > 0");
      return s;
    }
    case "recentre": {
      c.keys(o, path, ["on"]);
      const s: RecentreSettings = { ...DEFAULT_STEPS.recentre };
      if (o.on !== undefined) s.on = c.str(o.on, `${path}.on`);
      return s;
    }
  }
}

/** Parses and checks a plan. `file` names the plan in errors and anchors its relative paths. */
export function parsePlan(text: string, file: string): Plan {
  const c: Checker = new Checker(file);
  let raw: Json;
  try {
    raw = JSON.parse(text) as Json;
  } catch (e) {
    throw new PeculiarError("format", `not valid JSON: ${(e as Error).message}`, { file });
  }
  const o = c.obj(raw, "");
  c.keys(o, "", ["plan", "title", "inputs", "truth", "steps"]);
  if (o.plan !== undefined && o.plan !== PLAN_FORMAT) c.fail("plan", "unknown plan format", o.plan, PLAN_FORMAT);
  const base = file === "<inline>" ? process.cwd() : dirname(resolve(file));
  const inputs = c.obj(o.inputs, "inputs");
  c.keys(inputs, "inputs", ["redshifts", "distances"]);
  const redshifts = input(c, inputs.redshifts, "inputs.redshifts", base);
  const dl = inputs.distances;
  if (!Array.isArray(dl) || dl.length === 0) c.fail("inputs.distances", "must be a non-empty list of distance catalogues", dl);
  const distances = dl.map((d, i) => input(c, d, `inputs.distances[${i}]`, base));
  const aliases = [redshifts.alias, ...distances.map((d) => d.alias)];
  const dup = aliases.find((a, i) => aliases.indexOf(a) !== i);
  if (dup) c.fail("inputs", "two inputs have the same alias; set 'alias' on one of them", dup);

  const steps: StepSettings = structuredClone(DEFAULT_STEPS);
  const enabled = new Set<StepName>(STEP_NAMES);
  if (o.steps !== undefined) {
    const so = c.obj(o.steps, "steps");
    c.keys(so, "steps", [...STEP_NAMES]);
    for (const name of STEP_NAMES) {
      const v = so[name];
      if (v === undefined || v === true) continue;
      if (v === false) {
        enabled.delete(name);
        continue;
      }
      (steps as unknown as Record<StepName, unknown>)[name] = stepSettings(c, name, v, `steps.${name}`);
    }
  }
  const ref = steps.combine.reference;
  if (ref !== undefined && !distances.some((d) => d.alias === ref)) c.fail("steps.combine.reference", "is not the alias of a distance catalogue", ref, distances.map((d) => d.alias).join(", "));

  const plan: Plan = {
    file,
    title: o.title === undefined ? "peculiar run" : c.str(o.title, "title"),
    redshifts,
    distances,
    steps,
    enabled,
  };
  if (o.truth !== undefined) {
    const t = c.str(o.truth, "truth");
    plan.truth = isAbsolute(t) ? t : resolve(base, t);
  }
  return plan;
}

/** What each step needs before it: a step runs only when all of these ran. */
export const NEEDS: Record<StepName, StepName[]> = {
  match: [],
  combine: ["match"],
  velocities: ["combine"],
  flag: ["velocities"],
  groups: ["velocities"],
  flow: ["velocities"],
  recentre: ["velocities"],
};
