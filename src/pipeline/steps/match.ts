/**
 * Step 1, match: loads the redshift survey and every distance catalogue (src/catalogue/load.ts:
 * roles, positions including sexagesimal, bad rows flagged), and matches each distance catalogue
 * onto the survey by sky position (src/crossmatch). Per catalogue ALIAS it writes
 * 01-match-ALIAS.arrow (the outer join: every survey row and every distance row, names present in
 * both prefixed with their alias, plus sep_arcsec, n_candidates, ambiguous, row_a, row_b) and
 * 01-match-ALIAS.json (counts, separation histogram, expected chance pairs, suggested radius).
 */
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { takeRows, tableFromColumns, type ColumnData } from "../../catalogue/columns.js";
import { loadCatalogue, type LoadOptions } from "../../catalogue/load.js";
import { INVALID_REASON, recordStep, VALID } from "../../catalogue/meta.js";
import { invalidReasons, validMask } from "../../catalogue/validity.js";
import { writeFileAtomic } from "../../catalogue/atomic.js";
import type { FormatName } from "../../catalogue/io.js";
import { crossMatch, joinRows, matchCounts, type MatchResult } from "../../crossmatch/match.js";
import { parseAngleArcsec } from "../../crossmatch/radius.js";
import { chancePairs, separationHistogram, suggestRadius } from "../../crossmatch/diagnostics.js";
import { ARCSEC } from "../../sky/angles.js";
import type { InputSpec } from "../plan.js";
import type { RunContext, StepOutcome } from "../runner.js";
import { saveTable, type LoadedCatalogue, type PipelineState } from "../state.js";

async function load(spec: InputSpec, require: LoadOptions["require"]): Promise<LoadedCatalogue> {
  const o: LoadOptions = { overrides: spec.columns, require };
  if (spec.format) o.format = spec.format as FormatName;
  const c = await loadCatalogue(spec.file, o);
  return { alias: spec.alias, file: spec.file, table: c.table, roles: c.roles, raDeg: c.raDeg, decDeg: c.decDeg };
}

/**
 * The joined table of a match: rows (rowA[k], rowB[k]) (-1 = absent) with every column of both
 * sides; a name in both gets its side's alias as prefix. valid is true when the rows present are
 * valid; invalid_reason names the side.
 */
function joinedTable(a: LoadedCatalogue, b: LoadedCatalogue, rowA: Int32Array, rowB: Int32Array, extra: ColumnData[]): Table {
  const namesA = new Set(a.table.schema.fields.map((f) => f.name));
  const namesB = new Set(b.table.schema.fields.map((f) => f.name));
  const both = new Set([...namesA].filter((x) => namesB.has(x)));
  const rename = (side: LoadedCatalogue, cols: ColumnData[]) => cols.map((c) => (both.has(c.name) ? { ...c, name: `${side.alias}_${c.name}` } : c));
  const colsA = rename(a, takeRows(a.table, rowA));
  const colsB = rename(b, takeRows(b.table, rowB));
  const n = rowA.length;
  const vA = validMask(a.table);
  const vB = validMask(b.table);
  const rA = invalidReasons(a.table);
  const rB = invalidReasons(b.table);
  const valid = new Uint8Array(n);
  const reason = new Array<string>(n);
  for (let k = 0; k < n; k++) {
    const i = rowA[k]!;
    const j = rowB[k]!;
    const parts: string[] = [];
    if (i >= 0 && !vA[i]) parts.push(`${a.alias}: ${rA[i]}`);
    if (j >= 0 && !vB[j]) parts.push(`${b.alias}: ${rB[j]}`);
    valid[k] = parts.length === 0 ? 1 : 0;
    reason[k] = parts.join("; ");
  }
  const cols = [...colsA, ...colsB, ...extra, { name: VALID, kind: "bool" as const, values: valid }, { name: INVALID_REASON, kind: "utf8" as const, values: reason }];
  let meta = new Map<string, string>();
  meta = recordStep(meta, "match", { a: a.file, b: b.file });
  return tableFromColumns(cols.filter((c, i, all) => all.findIndex((x) => x.name === c.name) === i), meta, n);
}

function int32(name: string, rows: Int32Array, description: string, oneBased: boolean): ColumnData {
  const n = rows.length;
  const values = new Int32Array(n);
  const nulls = new Uint8Array(n);
  for (let k = 0; k < n; k++) {
    if (rows[k]! < 0) nulls[k] = 1;
    else values[k] = rows[k]! + (oneBased ? 1 : 0);
  }
  return { name, kind: "int32", values, nulls, meta: { description } };
}

export async function matchStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const settings = plan.steps.match;
  const radiusArcsec = parseAngleArcsec(settings.radius, "steps.match.radius");
  const survey = await load(plan.redshifts, ["ra", "dec"]);
  s.redshifts = survey;
  const outputs: string[] = [];
  const numbers: Record<string, unknown>[] = [];
  s.matches = [];
  for (const spec of plan.distances) {
    ctx.progress(`step match: ${spec.alias}`);
    const b = await load(spec, ["ra", "dec"]);
    const o: Parameters<typeof crossMatch>[2] = { radiusArcsec, select: settings.select };
    if (settings.maxDvKmS !== undefined) o.maxDvKmS = settings.maxDvKmS;
    const r: MatchResult = crossMatch({ raDeg: survey.raDeg, decDeg: survey.decDeg }, { raDeg: b.raDeg, decDeg: b.decDeg }, o);
    const nA = survey.table.numRows;
    const rowB = new Int32Array(nA).fill(-1);
    const sepArcsec = new Float64Array(nA).fill(NaN);
    for (let t = 0; t < r.chosen.length; t++) {
      const k = r.chosen[t]!;
      const i = r.candidates.a[k]!;
      if (rowB[i]! >= 0) continue; // one distance per survey row (the best; 'nearest' and 'one-to-one' give one anyway)
      rowB[i] = r.candidates.b[k]!;
      sepArcsec[i] = r.candidates.sepRad[k]! / ARCSEC;
    }
    const counts = matchCounts(r);
    const hist = separationHistogram(r, radiusArcsec);
    const chance = chancePairs(r, () => radiusArcsec);
    const suggestion = suggestRadius(r.pointsA, r.pointsB, r.searchRadiusArcsec, r.usableA);
    s.matches.push({ alias: spec.alias, catalogue: b, rowB, sepArcsec, radiusArcsec, expectedChance: chance.expectedChancePairs });

    const j = joinRows(r, "outer");
    const sep = new Float64Array(j.length).fill(NaN);
    const amb = new Uint8Array(j.length);
    const ncand = new Int32Array(j.length);
    for (let k = 0; k < j.length; k++) {
      const t = j.match[k]!;
      if (t >= 0) {
        sep[k] = r.candidates.sepRad[r.chosen[t]!]! / ARCSEC;
        amb[k] = r.ambiguous[t]!;
      }
      const i = j.rowA[k]!;
      ncand[k] = i >= 0 ? r.nCandidates[i]! : 0;
    }
    const sepNulls = Uint8Array.from(sep, (x) => (Number.isNaN(x) ? 1 : 0));
    const extra: ColumnData[] = [
      { name: "sep_arcsec", kind: "float64", values: sep, nulls: sepNulls, meta: { unit: "arcsec", ucd: "pos.angDistance", description: "separation of the matched pair" } },
      { name: "n_candidates", kind: "int32", values: ncand, meta: { description: `rows of ${spec.alias} within the radius of the survey row` } },
      { name: "ambiguous", kind: "bool", values: amb, meta: { description: "a second candidate is almost as good (crossmatch AMBIGUITY_DELTA)" } },
      int32("row_a", j.rowA, `row of ${survey.alias} (1-based)`, true),
      int32("row_b", j.rowB, `row of ${spec.alias} (1-based)`, true),
    ];
    const table = joinedTable(survey, b, j.rowA, j.rowB, extra);
    outputs.push(await saveTable(ctx.outDir, `01-match-${spec.alias}.arrow`, table));
    const report = { a: survey.file, b: b.file, radiusArcsec, select: settings.select, maxDvKmS: settings.maxDvKmS ?? null, counts, histogram: hist, chance, suggestion };
    const reportName = `01-match-${spec.alias}.json`;
    await writeFileAtomic(join(ctx.outDir, reportName), JSON.stringify(report, null, 2) + "\n");
    outputs.push(reportName);
    numbers.push({
      alias: spec.alias,
      rowsSurvey: counts.rowsA,
      rows: counts.rowsB,
      invalidRows: validMask(b.table).reduce((acc, v) => acc + (v ? 0 : 1), 0),
      matched: counts.matchedPairs,
      unmatchedDistanceRows: counts.unmatchedB,
      ambiguous: counts.ambiguous,
      expectedChancePairs: chance.expectedChancePairs,
      suggestedRadiusArcsec: suggestion.suggestedArcsec,
      separationSigmaArcsec: suggestion.sigmaArcsec,
    });
  }
  const surveyInvalid = validMask(survey.table).reduce((acc, v) => acc + (v ? 0 : 1), 0);
  return { outputs, numbers: { survey: { rows: survey.table.numRows, invalidRows: surveyInvalid, roles: survey.roles }, catalogues: numbers } };
}
