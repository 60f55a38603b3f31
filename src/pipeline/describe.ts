/**
 * Words about a run: the plan format as `--help` prints it, and the few lines a finished run
 * prints on stderr (the headline numbers beside the truth).
 */
import { relative } from "node:path";
import type { RunResult } from "./run.js";
import { formatLikeError, formatWithError } from "./report.js";

export const PLAN_HELP = `plan format (JSON; paths relative to the plan's folder; unknown keys are errors):
  {
    "plan": "peculiar-plan/1",
    "title": "words for the report",
    "inputs": {
      "redshifts": { "file": "survey.csv", "alias": "svy", "columns": { "cz": "cz_helio" } },
      "distances": [ { "file": "dist1.vot" }, { "file": "dist2.fits", "alias": "second" } ]
    },
    "truth": "truth.json",                       (optional: injected values to compare with)
    "steps": {                                   (each optional; false skips a step)
      "match":      { "radius": "3arcsec", "select": "one-to-one" | "nearest", "maxDvKmS": 500 },
      "combine":    { "reference": "ALIAS", "applyOffsets": true },
      "velocities": { "frame": "cmb", "apex": "NAME", "h0": 70, "omegaM": 0.3, "estimator": "exact" | "linear" | "log" },
      "flag":       { "method": "clip" | "mad", "kappa": 3.5, "sigmaStarKmS": 250 },
      "groups":     { "scaling": "hg82" | "constant", "linkMpc": 0.74, "linkKmS": 350, "minMembers": 5 },
      "flow":       { "sigmaStarKmS": 250, "maxDistMpc": 200 },
      "recentre":   { "on": "group:richest" | "group:ID" | "id:NAME" | "RA,DEC,DIST" }
    }
  }
  "columns" maps roles to column names (as --col ROLE=NAME elsewhere); "alias" defaults to the
  file's stem and prefixes clashing column names after the match.

outputs in OUTDIR:
  01-match-ALIAS.arrow/.json   the redshift survey left-joined with each distance catalogue, match report
  02-combined.arrow            one distance per galaxy after zero points (offsets in summary.json)
  03-velocities.arrow          frames, distances, peculiar velocities and errors
  04-flagged.arrow             + outlier, outlier_score, outlier_reason
  05-groups.arrow, 05-groups-table.arrow   + group_id, group_size; one row per group
  06-flow.json                 H0 and bulk flow with covariance
  07-recentre.arrow/.json      the field seen from the new origin
  final.arrow                  the table the view shows (npm start serves it)
  summary.json, report.md, plot-*.svg`;

/** The lines `peculiar run` prints on stderr when it ends (ok or failed). */
export function summaryLines(r: RunResult): string[] {
  const s = r.summary;
  const lines: string[] = [];
  const ok = s.steps.filter((x) => x.status === "ok").map((x) => x.step);
  lines.push(`run: ${s.status === "ok" ? "done" : "stopped"} in ${s.seconds.toFixed(1)} s; steps ok: ${ok.join(", ") || "none"}`);
  if (r.removed.length > 0) lines.push(`run: removed ${r.removed.length} ${r.removed.length === 1 ? "file" : "files"} of an earlier run that this one did not write: ${r.removed.join(", ")}`);
  for (const c of s.comparisons) {
    lines.push(`run: ${c.label}: ${formatWithError(c.recovered, c.error)} ${c.unit} (truth ${formatLikeError(c.truth, c.error)}; ${Number.isFinite(c.nSigma) ? c.nSigma.toFixed(1) : "inf"} sigma)`);
  }
  const num = (step: string) => s.steps.find((x) => x.step === step && x.status === "ok")?.numbers;
  const flag = num("flag");
  if (flag) {
    const b = flag.blundersInjected !== undefined ? `; injected blunders flagged: ${flag.blundersFlagged} of ${flag.blundersWithVelocity} with a velocity` : "";
    lines.push(`run: outliers flagged: ${flag.outliers}${b}`);
  }
  const rc = num("recentre");
  if (rc) lines.push(`run: seen from ${rc.origin}: H0 = ${formatWithError(rc.h0There as number, rc.h0ThereErr as number)} against ${formatWithError(rc.h0Here as number, rc.h0HereErr as number)} from here: ${rc.copernican}`);
  const where = relative(process.cwd(), r.outDir) || ".";
  lines.push(`run: summary ${where}/summary.json, report ${where}/report.md${s.final ? `, final table ${where}/${s.final}` : ""}`);
  return lines;
}
