/**
 * `peculiar match A B -o OUT --radius R`: cross-match two catalogues on the sky (and in velocity).
 * Parses flags, loads both inputs, calls src/crossmatch, writes the joined table and the report.
 */
import { statSync } from "node:fs";
import { basename, extname } from "node:path";
import type { Command, Io } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags } from "../command.js";
import { usageError } from "../../errors.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags, readAheadForCommand } from "../catalogue-flags.js";
import { assertOutputs, writeFileAtomic, writeTable } from "../../catalogue/io.js";
import { parseAngleArcsec } from "../../crossmatch/radius.js";
import { availableParallelism } from "node:os";
import { crossMatchBanded, joinRows, matchCounts, JOIN_MODES, type JoinMode, type MatchOptions } from "../../crossmatch/match.js";
import { warmKernelsFor } from "../../crossmatch/pairs.js";
import { BandPool } from "../../crossmatch/threads.js";
import { AMBIGUITY_DELTA, SELECT_MODES, type SelectMode } from "../../crossmatch/select.js";
import { sideExtras } from "../../crossmatch/inputs.js";
import { flagRows } from "../../catalogue/validity.js";
import { matchRowText, matchTable } from "../../crossmatch/output.js";
import { chancePairs, separationHistogram, suggestRadius } from "../../crossmatch/diagnostics.js";
import { POOL_MIN_BYTES } from "./match-early.js";

/** Most threads used when --threads is not given. */
const MAX_DEFAULT_THREADS = 2;
/**
 * Without --threads, below this many rows (A + B) the bands run on this thread, and workers are only
 * started for input files of POOL_MIN_BYTES or more in all: a worker's start-up costs more than it
 * saves on smaller catalogues (measured at 1e5 + 1e5 rows: no gain).
 */
const THREADS_MIN_ROWS = 400_000;

const help = `usage: peculiar match A B -o OUT (--radius R | --sigma K) [options]

Cross-matches catalogue A with catalogue B by sky position (ICRS) and, optionally, velocity.
Pairs are found by the zones algorithm (Gray, Szalay et al. 2007) on 3-D unit vectors and kept
by their exact separation; it is exact at the poles and across RA 0/360.

options:
  -o, --output FILE      output table (format from the extension, or --out-format)
  --radius R             match radius with a unit: 2arcsec, 0.5arcmin, 1e-3deg, 300mas
  --sigma K              accept a pair when sep <= K sqrt(sA^2 + sB^2), sA and sB the 1-sigma
                         per-axis positional errors (roles pos_err, or ra_err/dec_err). Alone, the
                         search radius is K times the largest combined error; with --radius both
                         tests must hold (R caps) and a row without an error falls back on R.
                         A catalogue with no error column counts as error 0; a negative or
                         infinite error flags its row and counts as no error.
  --max-dv V             reject pairs whose velocities (cz, or c*z) differ by more than V km/s; the
                         velocity difference then enters the score and breaks positional near-ties.
                         A pair with a velocity missing is kept on position alone (dv term = 1).
  --select MODE          nearest (default): each A row's best candidate (a B row may serve several);
                         all: every accepted pair; one-to-one: global greedy by increasing score,
                         so no row is used twice and a good pair is never shadowed by a worse one
  --join J               inner (default: matched rows only), left (every A row), outer (also B rows
                         no match uses)
  --alias A,B            prefixes for column names present in both (default: the file stems)
  --ambiguity D          score gap below which a competing candidate makes a match ambiguous
                         (default ${AMBIGUITY_DELTA}); score = (sep/r)^2 [+ (dv/V)^2], r the pair's radius
  --report FILE.json     write counts, the separation histogram, the expected chance pairs and a
                         suggested radius (Rayleigh core plus flat background fit) to FILE.json;
                         the chance estimate and the suggestion also go to stderr
  --partitions N         process the sky as N declination bands (default: one per thread)
  --threads N            threads to match on, this one included (default: the cores, at most ${MAX_DEFAULT_THREADS},
                         and one thread for catalogues under ${THREADS_MIN_ROWS} rows in all)
${CATALOGUE_FLAGS_HELP}
  -q, --quiet            no summary on stderr

Output: all columns of A and B (clashing names prefixed ALIAS_), then sep_arcsec, dv (when both
have velocities), n_candidates, ambiguous, row_a, row_b (source rows; null where absent), and
valid / invalid_reason combined from both sides. A match is ambiguous when another accepted pair
sharing its A or its B row has a score within the ambiguity gap of its own. In CSV output, the
cells of a number-only CSV input with the same delimiter are written as that file spelled them.
`;

/** An alias: a name that column names can start with in every output format (no leading digit). */
const ALIAS_RE = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** The default alias: the file's stem, other characters as _, a leading digit after a _ (2mass.csv: _2mass). */
function stem(path: string): string {
  const b = basename(path);
  const e = extname(b);
  const s = (e ? b.slice(0, -e.length) : b).replace(/[^A-Za-z0-9_]/g, "_");
  return s === "" ? "cat" : /^[0-9]/.test(s) ? `_${s}` : s;
}

function oneOf<T extends string>(value: string | undefined, allowed: readonly T[], flag: string, fallback: T): T {
  if (value === undefined) return fallback;
  if ((allowed as readonly string[]).includes(value)) return value as T;
  throw usageError(`bad value for --${flag}`, { value, expected: allowed.join(", ") });
}

const command: Command = {
  name: "match",
  summary: "cross-match two catalogues on the sky (and in velocity)",
  help,
  async run(argv: string[], io: Io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        output: { type: "string", short: "o" },
        radius: { type: "string" },
        sigma: { type: "string" },
        "max-dv": { type: "string" },
        select: { type: "string" },
        join: { type: "string" },
        alias: { type: "string" },
        ambiguity: { type: "string" },
        report: { type: "string" },
        partitions: { type: "string" },
        threads: { type: "string" },
      },
      "match",
    );
    if (positionals.length !== 2) throw usageError("match needs two input catalogues A and B; see 'peculiar match --help'", { value: positionals });
    const [pathA, pathB] = positionals as [string, string];
    const out = values.output;
    if (!out) throw usageError("match needs an output file: -o OUT");
    assertOutputs([pathA, pathB], [out, values.report]);
    if (values.radius === undefined && values.sigma === undefined) throw usageError("match needs --radius R (e.g. 2arcsec) or --sigma K");
    const radiusArcsec = values.radius === undefined ? undefined : parseAngleArcsec(values.radius, "--radius");
    const sigmaK = values.sigma === undefined ? undefined : numberFlag(values.sigma, "sigma", 0, (x) => x > 0, "a number > 0");
    const maxDvKmS = values["max-dv"] === undefined ? undefined : numberFlag(values["max-dv"], "max-dv", 0, (x) => x >= 0, "km/s >= 0");
    const select = oneOf<SelectMode>(values.select, SELECT_MODES, "select", "nearest");
    const join = oneOf<JoinMode>(values.join, JOIN_MODES, "join", "inner");
    const ambiguityDelta = numberFlag(values.ambiguity, "ambiguity", AMBIGUITY_DELTA, (x) => x >= 0, "a number >= 0");
    const partitions = numberFlag(values.partitions, "partitions", 1, (x) => Number.isInteger(x) && x >= 1 && x <= 4096, "an integer 1..4096");
    const threads = numberFlag(values.threads, "threads", Math.min(MAX_DEFAULT_THREADS, availableParallelism()), (x) => Number.isInteger(x) && x >= 1 && x <= 256, "an integer 1..256");
    const threadsGiven = values.threads !== undefined;
    let aliasA = stem(pathA);
    let aliasB = stem(pathB);
    if (values.alias !== undefined) {
      const parts = values.alias.split(",").map((s) => s.trim());
      if (parts.length !== 2 || parts.some((p) => !ALIAS_RE.test(p))) throw usageError("bad value for --alias", { value: values.alias, expected: "two names A,B of letters, digits and _, each starting with a letter or _ (e.g. _2mass)" });
      [aliasA, aliasB] = parts as [string, string];
    }
    if (aliasA === aliasB) {
      aliasA = `${aliasA}_a`;
      aliasB = `${aliasB}_b`;
    }
    const flags = parseCatalogueFlags(values, 2);
    // progress: one self-erasing status line, only when stderr is a terminal
    const phase = (what: string) => {
      if (io.progress) io.stderr.write(`\r\x1b[Kmatch: ${what}`);
    };
    const phaseDone = () => {
      if (io.progress) io.stderr.write("\r\x1b[K");
    };
    const noteIo: Io = { ...io, note: (line) => (phaseDone(), io.note(line)) };

    phase(`reading ${pathA}`);
    // B is read on a worker thread while A is read here (a large text file; else it is read later here)
    const aheadB = readAheadForCommand(pathB, flags);
    // the helper threads start now (or have, to read B), so that their start-up overlaps the reading;
    // after the read job, a helper warms the band kernels (helper-threads.ts)
    const pool = threads > 1 && (threadsGiven || fileBytes(pathA) + fileBytes(pathB) >= POOL_MIN_BYTES) ? new BandPool(threads) : undefined;
    let catA;
    try {
      catA = await loadForCommand(pathA, flags, noteIo, { index: 1, require: ["ra", "dec"] });
    } catch (e) {
      aheadB.cancel();
      throw e;
    }
    // while B may still be read on a helper: the kernels the match would warm later are warmed now
    warmKernelsFor(catA.raDeg.length);
    phase(`reading ${pathB}`);
    const catB = await loadForCommand(pathB, flags, noteIo, { index: 2, require: ["ra", "dec"], table: aheadB });
    let tableA = catA.table;
    let tableB = catB.table;
    const xa = sideExtras(catA.table, catA.roles, pathA, catA.units);
    const xb = sideExtras(catB.table, catB.roles, pathB, catB.units);
    for (const n of xa.notes) io.note(`${pathA}: ${n}`);
    for (const n of xb.notes) io.note(`${pathB}: ${n}`);
    if (sigmaK !== undefined) {
      if (!xa.posErrArcsec && !xb.posErrArcsec) throw usageError("--sigma needs positional errors (role pos_err, or ra_err/dec_err) in at least one catalogue; name them with --col pos_err=NAME");
      for (const [x, p] of [[xa, pathA], [xb, pathB]] as const) {
        if (!x.posErrArcsec) {
          x.posErrArcsec = new Float64Array(p === pathA ? catA.raDeg.length : catB.raDeg.length);
          io.note(`${p}: no positional error column; its errors count as 0 in --sigma`);
        } else io.note(`${p}: positional errors from ${x.posErrFrom}`);
        if (x.badPosErr) io.note(`${p}: ${x.badPosErr.count} ${x.badPosErr.count === 1 ? "row" : "rows"} with a negative or infinite positional error: flagged, and matched as rows without an error`);
      }
      // the step flags the errors it cannot use (the rows stay, and are matched on --radius alone when given)
      if (xa.badPosErr) tableA = flagRows(tableA, xa.badPosErr.bad, xa.badPosErr.reasons);
      if (xb.badPosErr) tableB = flagRows(tableB, xb.badPosErr.bad, xb.badPosErr.reasons);
    }
    if (maxDvKmS !== undefined) {
      if (!xa.velocityKmS || !xb.velocityKmS) {
        const which = !xa.velocityKmS ? pathA : pathB;
        throw usageError(`--max-dv needs a velocity (role cz or z) in both catalogues; ${which} has none (name it with --col cz=NAME or --col z=NAME)`);
      }
      io.note(`velocities: ${pathA} ${xa.velocityFrom}, ${pathB} ${xb.velocityFrom}`);
    }
    const opts: MatchOptions = { select, ambiguityDelta, partitions };
    if (radiusArcsec !== undefined) opts.radiusArcsec = radiusArcsec;
    if (sigmaK !== undefined) opts.sigmaK = sigmaK;
    if (maxDvKmS !== undefined) opts.maxDvKmS = maxDvKmS;
    if (io.progress && partitions > 1) opts.onProgress = (d, t) => phase(`matching band ${d}/${t}`);
    phase("matching");
    const sideA = { raDeg: catA.raDeg, decDeg: catA.decDeg, posErrArcsec: xa.posErrArcsec, velocityKmS: xa.velocityKmS };
    const sideB = { raDeg: catB.raDeg, decDeg: catB.decDeg, posErrArcsec: xb.posErrArcsec, velocityKmS: xb.velocityKmS };
    let result;
    try {
      const useThreads = pool !== undefined && pool.size > 0 && (threadsGiven || catA.raDeg.length + catB.raDeg.length >= THREADS_MIN_ROWS);
      result = await crossMatchBanded(sideA, sideB, opts, useThreads ? threads : 1, useThreads ? pool.run : undefined);
    } catch (e) {
      throw usageError(e instanceof Error ? e.message : String(e));
    }
    if (radiusArcsec === undefined) io.note(`match: search radius ${result.searchRadiusArcsec.toPrecision(4)} arcsec (--sigma ${sigmaK} times the largest combined error)`);
    const rows = joinRows(result, join);
    const settings = { radiusArcsec: radiusArcsec ?? null, sigma: sigmaK ?? null, maxDvKmS: maxDvKmS ?? null, select, join, ambiguityDelta, inputA: pathA, inputB: pathB };
    const table = matchTable(tableA, tableB, result, rows, {
      aliasA,
      aliasB,
      withDv: xa.velocityKmS !== undefined && xb.velocityKmS !== undefined,
      settings,
      rolesA: catA.roles,
      rolesB: catB.roles,
    });
    phase(`writing ${out}`);
    await writeTable(table, out, { ...(flags.outFormat ? { format: flags.outFormat } : {}), rowText: matchRowText(tableA, tableB, rows) });
    phaseDone();

    const counts = matchCounts(result);
    const radiusOfRow = (i: number): number => {
      if (sigmaK === undefined) return radiusArcsec!;
      const ea = xa.posErrArcsec![i]!;
      const eb = medianFinite(xb.posErrArcsec!);
      const r = sigmaK * Math.sqrt(ea * ea + eb * eb);
      return r === r ? Math.min(r, radiusArcsec ?? Infinity) : radiusArcsec ?? NaN;
    };
    io.note(
      `match: ${counts.rowsA} rows in ${aliasA}, ${counts.rowsB} in ${aliasB}; ${counts.matchedPairs} pairs (${select}), ` +
        `${counts.matchedA} of ${aliasA} and ${counts.matchedB} of ${aliasB} matched; unmatched ${counts.unmatchedA} / ${counts.unmatchedB}; ` +
        `${counts.ambiguous} ambiguous`,
    );
    if (counts.rejectedByDv) io.note(`match: ${counts.rejectedByDv} pairs rejected by --max-dv ${maxDvKmS} km/s; ${counts.uncheckedDv} kept without a velocity check`);
    if (counts.rejectedBySigma || counts.rejectedNoError) io.note(`match: ${counts.rejectedBySigma} pairs rejected by --sigma ${sigmaK}; ${counts.rejectedNoError} without an error to test`);
    if (counts.usableA < counts.rowsA || counts.usableB < counts.rowsB) io.note(`match: rows without a usable position (never matched): ${counts.rowsA - counts.usableA} in ${aliasA}, ${counts.rowsB - counts.usableB} in ${aliasB}`);
    if (values.report) {
      phase("diagnostics");
      const chance = chancePairs(result, radiusOfRow);
      const histMax = radiusArcsec ?? result.searchRadiusArcsec;
      const suggestion = suggestRadius(result.pointsA, result.pointsB, result.searchRadiusArcsec, result.usableA);
      const report = {
        command: "match",
        settings: { ...settings, aliasA, aliasB, searchRadiusArcsec: result.searchRadiusArcsec, output: out },
        counts,
        histogram: separationHistogram(result, histMax),
        chance,
        suggestedRadius: suggestion,
        ambiguity: { delta: ambiguityDelta, definition: "a chosen pair is ambiguous when another accepted pair sharing its A or its B row has score <= its score + delta; score = (sep/r)^2 (+ (dv/V)^2 with --max-dv), r = the pair's acceptance radius" },
      };
      await writeFileAtomic(values.report, JSON.stringify(report, null, 2) + "\n");
      phaseDone();
      io.note(`match: expected chance pairs ${chance.expectedChancePairs.toFixed(1)} (${(100 * chance.expectedChanceFraction).toFixed(2)} % of the pairs)`);
      if (suggestion.suggestedArcsec !== null) io.note(`match: suggested radius ${suggestion.suggestedArcsec.toFixed(3)} arcsec (sigma ${suggestion.sigmaArcsec!.toFixed(3)} arcsec; ${suggestion.note}); report in ${values.report}`);
      else io.note(`match: no suggested radius (${suggestion.note}); report in ${values.report}`);
    }
    return 0;
  },
};

/** Size of a file in bytes, 0 when it cannot be read (the loader reports that). */
function fileBytes(path: string): number {
  try {
    return statSync(path).size;
  } catch {
    return 0;
  }
}

function medianFinite(x: Float64Array): number {
  const v = Array.from(x).filter((e) => Number.isFinite(e)).sort((p, q) => p - q);
  return v.length ? v[v.length >> 1]! : 0;
}

export default command;
