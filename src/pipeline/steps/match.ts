/**
 * Step 1, match: loads the redshift survey and every distance catalogue (src/catalogue/load.ts:
 * roles, positions including sexagesimal, bad rows flagged), and matches each distance catalogue
 * onto the survey by sky position (src/crossmatch). Per catalogue ALIAS it writes
 * 01-match-ALIAS.arrow (the outer join by src/crossmatch/output.ts: every survey row and every
 * distance row, names present in both prefixed with their alias, plus sep_arcsec, n_candidates,
 * ambiguous, row_a, row_b) and
 * 01-match-ALIAS.json (counts, separation histogram, expected chance pairs, suggested radius).
 */
import { join } from "node:path";
import { loadCatalogue, type LoadOptions } from "../../catalogue/load.js";
import { validMask } from "../../catalogue/validity.js";
import { writeFileAtomic } from "../../catalogue/atomic.js";
import type { FormatName } from "../../catalogue/io.js";
import { crossMatch, joinRows, matchCounts, type MatchResult, type MatchSide } from "../../crossmatch/match.js";
import { sideExtras } from "../../crossmatch/inputs.js";
import { matchTable } from "../../crossmatch/output.js";
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
  return { alias: spec.alias, file: spec.file, table: c.table, roles: c.roles, raDeg: c.raDeg, decDeg: c.decDeg, units: c.units };
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
    const ea = sideExtras(survey.table, survey.roles, survey.file, survey.units);
    const eb = sideExtras(b.table, b.roles, b.file, b.units);
    const sideA: MatchSide = { raDeg: survey.raDeg, decDeg: survey.decDeg };
    const sideB: MatchSide = { raDeg: b.raDeg, decDeg: b.decDeg };
    if (ea.velocityKmS) sideA.velocityKmS = ea.velocityKmS;
    if (eb.velocityKmS) sideB.velocityKmS = eb.velocityKmS;
    const r: MatchResult = crossMatch(sideA, sideB, o);
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
    const table = matchTable(survey.table, b.table, r, j, {
      aliasA: survey.alias,
      aliasB: spec.alias,
      withDv: Boolean(ea.velocityKmS && eb.velocityKmS),
      settings: { radiusArcsec, select: settings.select, join: "outer", maxDvKmS: settings.maxDvKmS ?? null },
      rolesA: survey.roles,
      rolesB: b.roles,
    });
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
