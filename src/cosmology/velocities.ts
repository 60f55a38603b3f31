/**
 * The velocities step on a catalogue: redshifts into one rest frame, measured distances into
 * cosmological redshifts, comoving distances and peculiar velocities with errors, and the
 * positions in Galactic and supergalactic coordinates. All input columns are kept; rows without a
 * usable redshift, distance or position stay in the table with valid = false and a reason.
 *
 * Columns added (DEVELOPERS.md column contract):
 *   z_<frame>, cz_<frame>   redshift and c z in the frame (cz is c z, not a velocity)
 *   dist_mpc, dist_err_mpc  luminosity distance D_L(z_cos) of the measurement and its 1-sigma error
 *                           (for a mu input this is 10^((mu-25)/5); comoving or eta inputs are
 *                           converted through z_cos)
 *   dist_lo_mpc, dist_hi_mpc  1-sigma bounds of D_L (asymmetric for mu and eta)
 *   dist_c_mpc, dist_c_err_mpc  comoving distance D_C(z_cos) and its error
 *   z_cos                   cosmological redshift of the measured distance
 *   v_pec, v_pec_err        peculiar velocity by the chosen estimator (estimators.ts) and its error
 *   v_pec_lo, v_pec_hi      the estimator at the far and near distance bounds
 *   l, b, sgl, sgb          Galactic and supergalactic longitude/latitude (deg)
 *   sgx, sgy, sgz           supergalactic Cartesian of the comoving distance (Mpc)
 * An input column with one of these names is kept, renamed "<name>_input" (l, b, sgl, sgb are
 * recomputed in place: they are the same quantities).
 *
 * Redshift input: the `cz` role (km/s, or m/s by its unit: units.ts) or else the `z` role, heliocentric unless `redshiftFrame`
 * says otherwise; errors from cz_err / z_err when present. For eta, D_C(z_obs) uses the CMB-frame
 * redshift (eta is defined on it), whatever frame is chosen for the output.
 */
import type { Table } from "apache-arrow";
import { columnDataOf, columnMeta, float64Column, hasColumn, tableFromColumns, withColumns, type ColumnData } from "../catalogue/columns.js";
import { META, recordStep, setJsonMeta, getRoles, type RoleMap } from "../catalogue/meta.js";
import { flagRows, validMask } from "../catalogue/validity.js";
import { PeculiarError } from "../errors.js";
import { convertPositions, ICRS_TO_SUPERGALACTIC, rotate, DEG } from "../sky/index.js";
import { C_KMS } from "./constants.js";
import { distanceScaleMpc, velocityScaleKmS } from "../catalogue/units.js";
import { checkCosmology, type Cosmology, type DistanceKind } from "./distances.js";
import { distancesFromColumn, distancesFromEta, distancesFromModulus, type DistanceSource, type MeasuredDistances } from "./distance-indicators.js";
import { peculiarVelocities, type Estimator } from "./estimators.js";
import { frameToHelio, galacticUnitVectors, helioToFrame, solarMotion, type FrameForm, type VelocityFrame } from "./restframes.js";

/** What the step needs of a loaded catalogue (src/catalogue/load.ts's Catalogue fits). */
export interface PositionedTable {
  table: Table;
  roles: RoleMap;
  raDeg: Float64Array;
  decDeg: Float64Array;
  file?: string;
  /** The unit of each role's column where one was given (--unit) or found (metadata); else the column's own metadata is read. */
  units?: Partial<Record<string, string>>;
}

export interface VelocityOptions {
  frame: VelocityFrame;
  apex?: string;
  form?: FrameForm;
  cosmology: Cosmology;
  estimator: Estimator;
  /** Which measurement gives the distance; default the first of mu, dist, eta with a role. */
  distance?: DistanceSource;
  /** The kind of a `dist` column (luminosity by default). */
  distKind?: DistanceKind;
  /** The frame of the input redshifts (helio by default); e.g. a mock given in the CMB frame. */
  redshiftFrame?: VelocityFrame;
  redshiftApex?: string;
}

export interface VelocityReport {
  rows: number;
  frame: VelocityFrame;
  apex: string;
  form: FrameForm;
  estimator: Estimator;
  distanceSource: DistanceSource;
  distanceColumn: string;
  redshiftColumn: string;
  /** Rows with a peculiar velocity. */
  withVelocity: number;
  /** Rows with a velocity but no error (no distance-error column or an empty one). */
  withoutError: number;
  /** Rows newly flagged by this step, by reason. */
  flagged: Record<string, number>;
  /** Rows valid after the step. */
  valid: number;
  /** Input columns kept under a new name because the step writes a column of that name. */
  renamed: string[];
  /** Things the user should know about the settings. */
  notes: string[];
}

/** Output names that, when already present, are recomputed in place rather than kept. */
const SAME_QUANTITY = new Set(["l", "b", "sgl", "sgb"]);

function f64(name: string, values: Float64Array, unit: string | undefined, ucd: string | undefined, description: string): ColumnData {
  let nulls: Uint8Array | undefined;
  for (let i = 0; i < values.length; i++) {
    if (Number.isNaN(values[i]!)) {
      nulls ??= new Uint8Array(values.length);
      nulls[i] = 1;
    }
  }
  const meta: ColumnData["meta"] = { description };
  if (unit) meta.unit = unit;
  if (ucd) meta.ucd = ucd;
  const c: ColumnData = { name, kind: "float64", values, meta };
  if (nulls) c.nulls = nulls;
  return c;
}

/**
 * Adds `columns` to `table`; an existing column of the same name is kept as "<name>_input"
 * (or replaced when `replaceable` has it). Returns the new table and the renamed names.
 */
export function addColumnsKeepingInputs(table: Table, columns: ColumnData[], replaceable: Set<string> = new Set()): { table: Table; renamed: string[] } {
  const renamed: string[] = [];
  let t = table;
  const clash = columns.filter((c) => hasColumn(t, c.name) && !replaceable.has(c.name)).map((c) => c.name);
  if (clash.length > 0) {
    const fields = t.schema.fields.map((f) => f.name);
    const taken = new Set([...fields, ...columns.map((c) => c.name)]);
    const renames = new Map<string, string>();
    for (const name of clash) {
      let alt = `${name}_input`;
      for (let k = 2; taken.has(alt); k++) alt = `${name}_input${k}`;
      taken.add(alt);
      renames.set(name, alt);
      renamed.push(`${name} -> ${alt}`);
    }
    t = renameColumns(t, renames);
  }
  return { table: withColumns(t, columns), renamed };
}

function renameColumns(table: Table, renames: Map<string, string>): Table {
  // Rebuild through ColumnData so field metadata and schema metadata stay.
  const cols = table.schema.fields.map((f) => f.name);
  const data: ColumnData[] = [];
  for (const name of cols) {
    const c = columnDataOf(table, name);
    data.push(renames.has(name) ? { ...c, name: renames.get(name)! } : c);
  }
  // Roles that pointed at a renamed column follow it.
  let meta = new Map(table.schema.metadata);
  const roles = getRoles(table);
  let changed = false;
  for (const [r, col] of Object.entries(roles)) {
    const to = col !== undefined ? renames.get(col) : undefined;
    if (to) {
      (roles as Record<string, string>)[r] = to;
      changed = true;
    }
  }
  if (changed) meta = setJsonMeta(meta, META.roles, roles);
  return tableFromColumns(data, meta, table.numRows);
}

function pickDistanceSource(roles: RoleMap, wanted: DistanceSource | undefined, file: string | undefined): DistanceSource {
  if (wanted) {
    if (!roles[wanted]) {
      throw new PeculiarError("column", `no column has the role '${wanted}'; name one with --col ${wanted}=NAME`, { file, expected: `a ${wanted} column` });
    }
    return wanted;
  }
  for (const s of ["mu", "dist", "eta"] as const) if (roles[s]) return s;
  throw new PeculiarError("column", "no distance column found (mu, dist or eta); name one with --col mu=NAME (or dist=, eta=)", { file });
}

function optionalColumn(table: Table, name: string | undefined): Float64Array | undefined {
  return name && hasColumn(table, name) ? float64Column(table, name) : undefined;
}

/** The velocities step. Throws only for unusable settings or missing columns; bad rows are flagged. */
export function computeVelocities(cat: PositionedTable, o: VelocityOptions): { table: Table; report: VelocityReport } {
  checkCosmology(o.cosmology);
  const form = o.form ?? "exact";
  const sun = solarMotion(o.frame, o.apex);
  const inSun = solarMotion(o.redshiftFrame ?? "helio", o.redshiftApex);
  const { table, roles } = cat;
  const n = table.numRows;
  const file = cat.file;
  const notes: string[] = [];
  // a role's unit: the one the loader settled on (--unit or metadata), else the column's metadata
  const unitOf = (role: keyof RoleMap): string | undefined => cat.units?.[role] ?? (roles[role] ? columnMeta(table, roles[role]!).unit : undefined);
  const scaled = (x: Float64Array | undefined, f: number): Float64Array | undefined => (x && f !== 1 ? x.map((v) => v * f) : x);

  // Redshifts.
  let zIn: Float64Array;
  let zErr: Float64Array | undefined;
  let redshiftColumn: string;
  if (roles.cz && hasColumn(table, roles.cz)) {
    redshiftColumn = roles.cz;
    const f = velocityScaleKmS(unitOf("cz"), { file, column: roles.cz, role: "cz" });
    const fe = roles.cz_err ? velocityScaleKmS(unitOf("cz_err") ?? unitOf("cz"), { file, column: roles.cz_err, role: "cz_err" }) : 1;
    if (f !== 1) notes.push(`cz <- ${roles.cz} in ${unitOf("cz")}: read as ${f} km/s per unit`);
    zIn = float64Column(table, roles.cz).map((v) => (v * f) / C_KMS);
    zErr = optionalColumn(table, roles.cz_err)?.map((v) => (v * fe) / C_KMS);
  } else if (roles.z && hasColumn(table, roles.z)) {
    redshiftColumn = roles.z;
    zIn = float64Column(table, roles.z);
    zErr = optionalColumn(table, roles.z_err);
  } else {
    throw new PeculiarError("column", "no redshift column found (cz or z); name one with --col cz=NAME or --col z=NAME", { file });
  }
  const nGal = galacticUnitVectors(cat.raDeg, cat.decDeg);
  const zHelio = inSun.frame === "helio" ? zIn : frameToHelio(zIn, nGal, inSun, form);
  const zFrame = sun.frame === "helio" ? Float64Array.from(zHelio) : helioToFrame(zHelio, nGal, sun, form);

  // Distances.
  const source = pickDistanceSource(roles, o.distance, file);
  const distanceColumn = roles[source]!;
  const errRole = `${source}_err` as const;
  let value = float64Column(table, distanceColumn);
  let err = optionalColumn(table, roles[errRole]);
  if (source === "dist") {
    // a distance in kpc, pc, Gpc or Mpc/h is brought to Mpc (its error by its own unit, else the distance's)
    const f = distanceScaleMpc(unitOf("dist"), o.cosmology.h0, { file, column: distanceColumn, role: "dist" });
    const fe = roles.dist_err ? distanceScaleMpc(unitOf("dist_err") ?? unitOf("dist"), o.cosmology.h0, { file, column: roles.dist_err, role: "dist_err" }) : 1;
    if (f !== 1) notes.push(`dist <- ${distanceColumn} in ${unitOf("dist")}: read as ${Number(f.toPrecision(6))} Mpc per unit${/h/i.test(unitOf("dist") ?? "") ? ` (h = H0/100 = ${o.cosmology.h0 / 100})` : ""}`);
    value = scaled(value, f)!;
    err = scaled(err, fe);
  }
  let dist: MeasuredDistances;
  if (source === "mu") dist = distancesFromModulus(value, err);
  else if (source === "dist") dist = distancesFromColumn(value, err, o.distKind ?? "luminosity");
  else {
    const zCmb = sun.frame === "cmb" ? zFrame : helioToFrame(zHelio, nGal, solarMotion("cmb"), form);
    dist = distancesFromEta(value, err, zCmb, o.cosmology);
  }
  const pv = peculiarVelocities(zFrame, zErr, dist, o.estimator, o.cosmology);

  // Positions.
  const gal = convertPositions(cat.raDeg, cat.decDeg, "icrs", "galactic");
  const sg = convertPositions(cat.raDeg, cat.decDeg, "icrs", "supergalactic");
  const sgx = new Float64Array(n);
  const sgy = new Float64Array(n);
  const sgz = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = cat.raDeg[i]! * DEG;
    const d = cat.decDeg[i]! * DEG;
    const c = Math.cos(d);
    const [x, y, z] = rotate(ICRS_TO_SUPERGALACTIC, c * Math.cos(a), c * Math.sin(a), Math.sin(d));
    const r = pv.distCMpc[i]!;
    sgx[i] = r * x;
    sgy[i] = r * y;
    sgz[i] = r * z;
  }

  // Flags.
  const bad = new Uint8Array(n);
  const reasons: (string | undefined)[] = new Array(n);
  const flagged: Record<string, number> = {};
  const flag = (i: number, why: string) => {
    bad[i] = 1;
    reasons[i] = reasons[i] ? `${reasons[i]}; ${why}` : why;
    flagged[why] = (flagged[why] ?? 0) + 1;
  };
  let withVelocity = 0;
  let withoutError = 0;
  for (let i = 0; i < n; i++) {
    const noPos = !(Number.isFinite(cat.raDeg[i]!) && Number.isFinite(cat.decDeg[i]!));
    if (noPos) flag(i, "no usable position");
    if (!Number.isFinite(zIn[i]!)) flag(i, `no usable redshift (${redshiftColumn})`);
    else if (!(zIn[i]! > -1)) flag(i, `redshift at or below z = -1 (${redshiftColumn}): 1 + z must be positive`);
    const hasDistance = Number.isFinite(dist.distMpc[i]!);
    if (!hasDistance) flag(i, `no usable distance (${distanceColumn})`);
    if (err !== undefined && err[i]! < 0) flag(i, `negative distance error (${roles[errRole]})`);
    else if (hasDistance && !Number.isFinite(pv.zCos[i]!)) flag(i, "distance beyond the range of the redshift solve (z_cos > 20)");
    if (Number.isFinite(pv.vPecKmS[i]!)) {
      withVelocity++;
      if (!Number.isFinite(pv.vPecErrKmS[i]!)) withoutError++;
    } else if (!bad[i]) flag(i, o.estimator === "log" ? "log estimator needs cz > 0" : "no peculiar velocity");
  }

  const fr = o.frame;
  const apexText = sun.frame === "helio" ? "none" : `${sun.name}: ${sun.citation}`;
  const columns: ColumnData[] = [
    f64(`z_${fr}`, zFrame, undefined, "src.redshift", `redshift in the ${fr} frame (${apexText}; ${form} form)`),
    f64(`cz_${fr}`, zFrame.map((z) => C_KMS * z), "km/s", "spect.dopplerVeloc.opt", `c z in the ${fr} frame (c times z, not a velocity)`),
    f64("dist_mpc", pv.distLMpc, "Mpc", "pos.distance", `luminosity distance D_L(z_cos) from ${source} column ${distanceColumn}`),
    f64("dist_err_mpc", pv.distLErrMpc, "Mpc", "stat.error;pos.distance", "first-order 1-sigma error of dist_mpc"),
    f64("dist_lo_mpc", pv.distLLoMpc, "Mpc", "stat.error;pos.distance", "lower 1-sigma bound of dist_mpc (asymmetric for mu and eta)"),
    f64("dist_hi_mpc", pv.distLHiMpc, "Mpc", "stat.error;pos.distance", "upper 1-sigma bound of dist_mpc"),
    f64("dist_c_mpc", pv.distCMpc, "Mpc", "pos.distance", "comoving distance D_C(z_cos) of the measured distance"),
    f64("dist_c_err_mpc", pv.distCErrMpc, "Mpc", "stat.error;pos.distance", "first-order 1-sigma error of dist_c_mpc"),
    f64("z_cos", pv.zCos, undefined, "src.redshift", `cosmological redshift of the measured distance (flat LCDM, H0 = ${o.cosmology.h0}, Omega_m = ${o.cosmology.omegaM})`),
    f64("v_pec", pv.vPecKmS, "km/s", "phys.veloc", `peculiar velocity, ${o.estimator} estimator, ${fr} frame`),
    f64("v_pec_err", pv.vPecErrKmS, "km/s", "stat.error;phys.veloc", "first-order 1-sigma error of v_pec (distance and redshift errors)"),
    f64("v_pec_lo", pv.vPecLoKmS, "km/s", "phys.veloc", "v_pec at the far 1-sigma distance bound"),
    f64("v_pec_hi", pv.vPecHiKmS, "km/s", "phys.veloc", "v_pec at the near 1-sigma distance bound"),
    f64("l", gal.lonDeg, "deg", "pos.galactic.lon", "Galactic longitude (IAU 1958 in ICRS, Hipparcos)"),
    f64("b", gal.latDeg, "deg", "pos.galactic.lat", "Galactic latitude"),
    f64("sgl", sg.lonDeg, "deg", "pos.supergalactic.lon", "supergalactic longitude (de Vaucouleurs et al. 1976)"),
    f64("sgb", sg.latDeg, "deg", "pos.supergalactic.lat", "supergalactic latitude"),
    f64("sgx", sgx, "Mpc", "pos.cartesian.x", "supergalactic X of the comoving distance"),
    f64("sgy", sgy, "Mpc", "pos.cartesian.y", "supergalactic Y of the comoving distance"),
    f64("sgz", sgz, "Mpc", "pos.cartesian.z", "supergalactic Z of the comoving distance"),
  ];
  const added = addColumnsKeepingInputs(table, columns, SAME_QUANTITY);
  let out = flagRows(added.table, bad, reasons);
  const settings = {
    frame: fr,
    apex: sun.name,
    apexCitation: sun.citation,
    apexVectorKmS: sun.vectorKmS,
    form,
    redshiftFrame: inSun.frame,
    redshiftApex: inSun.name,
    redshiftColumn,
    h0: o.cosmology.h0,
    omegaM: o.cosmology.omegaM,
    estimator: o.estimator,
    distanceSource: source,
    distanceColumn,
    distanceKind: dist.kind,
  };
  out = withColumns(out, [], recordStep(new Map(out.schema.metadata), "velocities", settings));
  if (fr !== "cmb") notes.push(`v_pec is relative to the ${fr} frame; peculiar velocities are usually quoted in the CMB frame (--frame cmb)`);
  if (source === "eta" && fr !== "cmb") notes.push("eta was read on the CMB-frame redshift (Planck 2018 apex), as it is defined");
  if (o.estimator === "linear") notes.push("the linear estimator cz - H0 D_C is biased by ~+100 km/s at z ~ 0.04 (Davis & Scrimgeour 2014); exact is the default");
  let valid = 0;
  const vm = validMask(out);
  for (let i = 0; i < n; i++) valid += vm[i]!;
  return {
    table: out,
    report: {
      rows: n,
      frame: fr,
      apex: sun.name,
      form,
      estimator: o.estimator,
      distanceSource: source,
      distanceColumn,
      redshiftColumn,
      withVelocity,
      withoutError,
      flagged,
      valid,
      renamed: added.renamed,
      notes,
    },
  };
}
