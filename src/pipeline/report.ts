/**
 * The run's two records: summary.json (everything, for tools and tests) and report.md (the same
 * numbers for a person, with the plots beside it as SVG files). The report is made from the
 * summary alone, so the two cannot disagree.
 */
import type { StepRecord } from "./runner.js";
import type { Comparison } from "./truth.js";

export const SUMMARY_FORMAT = "peculiar-run-summary/1";

export interface RunSummary {
  summary: typeof SUMMARY_FORMAT;
  title: string;
  plan: string;
  status: "ok" | "failed" | "running";
  failedStep?: string;
  seconds: number;
  steps: StepRecord[];
  /** The final table (relative to the output folder), when the run got that far. */
  final?: string;
  truthFile?: string;
  /** Recovered numbers against the injected truth (empty without a truth file). */
  comparisons: Comparison[];
  /** The sigma multiple under which a recovered number is called consistent in the report. */
  consistentWithin: number;
  /** Plot files (SVG) relative to the output folder, with their captions. */
  plots: { file: string; caption: string }[];
}

/** A number with a sensible count of digits for its error. */
export function formatWithError(value: number, error: number): string {
  if (!Number.isFinite(value)) return "n/a";
  if (!Number.isFinite(error) || error <= 0) return fmtSig(value, 4);
  const digits = Math.max(0, Math.min(6, 1 - Math.floor(Math.log10(error))));
  return `${value.toFixed(digits)} ± ${error.toFixed(digits)}`;
}

/** `x` with as many decimals as formatWithError gives a value with this error. */
export function formatLikeError(x: number, error: number): string {
  if (!Number.isFinite(x)) return "n/a";
  if (!Number.isFinite(error) || error <= 0) return fmtSig(x, 4);
  const digits = Math.max(0, Math.min(6, 1 - Math.floor(Math.log10(error))));
  return x.toFixed(digits);
}

function fmtSig(x: number, sig: number): string {
  if (!Number.isFinite(x)) return "n/a";
  if (x === 0) return "0";
  const digits = Math.max(0, Math.min(6, sig - 1 - Math.floor(Math.log10(Math.abs(x)))));
  return x.toFixed(digits);
}

function cell(v: unknown): string {
  if (typeof v === "number") return Number.isInteger(v) ? String(v) : fmtSig(v, 4);
  if (v === null || v === undefined) return "";
  if (typeof v === "object") return "`" + JSON.stringify(v).replace(/\|/g, "\\|") + "`";
  return String(v).replace(/\|/g, "\\|");
}

/** A step's numbers as a nested bullet list: objects indent, lists of objects are headed by their alias or index. */
function numbersOf(rec: StepRecord): string[] {
  const out: string[] = [];
  const walk = (key: string, v: unknown, depth: number) => {
    const pad = "  ".repeat(depth);
    if (Array.isArray(v) && v.some((x) => x !== null && typeof x === "object")) {
      out.push(`${pad}- ${key}:`);
      v.forEach((x, i) => {
        const name = x && typeof x === "object" && "alias" in x ? String((x as { alias: unknown }).alias) : String(i + 1);
        walk(name, x, depth + 1);
      });
    } else if (Array.isArray(v)) {
      out.push(`${pad}- ${key}: ${v.map((x) => cell(x)).join(", ")}`);
    } else if (v !== null && typeof v === "object") {
      out.push(`${pad}- ${key}:`);
      for (const [k, x] of Object.entries(v)) if (k !== "alias") walk(k, x, depth + 1);
    } else out.push(`${pad}- ${key}: ${cell(v)}`);
  };
  for (const [k, v] of Object.entries(rec.numbers ?? {})) walk(k, v, 0);
  return out;
}

export function reportMarkdown(s: RunSummary): string {
  const L: string[] = [];
  L.push(`# ${s.title}`, "");
  L.push(`Plan: \`${s.plan}\`; ${s.steps.filter((x) => x.status === "ok").length} of ${s.steps.length} steps ran in ${s.seconds.toFixed(1)} s.`);
  if (s.status === "failed") {
    const f = s.steps.find((x) => x.step === s.failedStep);
    L.push("", `**Step '${s.failedStep}' failed:** ${f?.reason ?? "unknown reason"}. The outputs of the steps before it are kept.`);
  }
  if (s.final) L.push("", `Final table: \`${s.final}\` (open it with \`peculiar view ${s.final}\`).`);
  L.push("");
  if (s.comparisons.length > 0) {
    L.push("## Recovered against the truth", "");
    L.push(`Truth from \`${s.truthFile ?? "?"}\`. Errors are the 1-sigma errors the steps report; the last column is |recovered - truth| / error.`, "");
    L.push("| quantity | recovered | truth | difference |", "| --- | --- | --- | --- |");
    for (const c of s.comparisons) {
      const flag = c.nSigma <= s.consistentWithin ? "" : ` (more than ${s.consistentWithin} sigma)`;
      L.push(`| ${c.label} (${c.unit}) | ${formatWithError(c.recovered, c.error)} | ${Number.isFinite(c.truth) ? String(Number(c.truth.toPrecision(6))) : "n/a"} | ${Number.isFinite(c.nSigma) ? c.nSigma.toFixed(2) : "inf"} sigma${flag} |`);
    }
    L.push("");
  }
  L.push("## Steps", "", "| step | status | seconds | outputs |", "| --- | --- | --- | --- |");
  for (const r of s.steps) {
    L.push(`| ${r.step} | ${r.status}${r.status !== "ok" && r.reason ? `: ${cell(r.reason)}` : ""} | ${r.seconds === undefined ? "" : r.seconds.toFixed(2)} | ${r.outputs.map((o) => `\`${o}\``).join(", ")} |`);
  }
  L.push("");
  for (const r of s.steps) {
    if (r.status !== "ok") continue;
    L.push(`### ${r.step}`, "");
    for (const n of r.notes ?? []) L.push(`- note: ${n}`);
    L.push(...numbersOf(r));
    L.push("");
  }
  if (s.plots.length > 0) {
    L.push("## Plots", "");
    for (const p of s.plots) L.push(`![${p.caption}](${p.file})`, "", `*${p.caption}*`, "");
  }
  return L.join("\n");
}
