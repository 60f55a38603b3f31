/**
 * `peculiar run PLAN.json [-o OUTDIR]`: the whole job as one command. Runs match, combine,
 * velocities, flag, groups, flow and recentre as the plan says, keeps every intermediate table as
 * Arrow in OUTDIR, and writes summary.json, report.md and the plots. A failed step is named with
 * its reason, the outputs before it stay, and the exit code is 1.
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, parseFlags } from "../command.js";
import { usageError } from "../../errors.js";
import { failureOf, readPlan, runPlan } from "../../pipeline/run.js";
import { PLAN_HELP, summaryLines } from "../../pipeline/describe.js";

const HELP = `usage: peculiar run PLAN.json [-o OUTDIR]

Runs the whole job described by PLAN.json: match -> combine -> velocities -> flag -> groups
-> flow -> recentre. Every intermediate table is kept as Arrow in OUTDIR (default ./out), with
summary.json (all numbers, and the recovered values beside the truth when the plan names a
truth file), report.md and SVG plots. The recovered H0 and bulk flow are printed on stderr.

If a step fails, the message names the step and why; the outputs of the steps before it stay
in OUTDIR and summary.json records how far the run got.

options:
  -o, --out OUTDIR   output folder (created if missing; default ./out)
  -q, --quiet        no summary on stderr

${PLAN_HELP}`;

const command: Command = {
  name: "run",
  summary: "run a whole plan: match, combine, velocities, flag, groups, flow, recentre",
  help: HELP,
  run: async (argv, io) => {
    const { values, positionals } = parseFlags(argv, { ...COMMON_FLAGS, out: { type: "string", short: "o" } }, "run");
    if (positionals.length !== 1) throw usageError("run: give exactly one plan file; see 'peculiar run --help'");
    const plan = await readPlan(positionals[0]!);
    const result = await runPlan(plan, {
      outDir: values.out ?? "out",
      progress: io.progress ? (line) => io.stderr.write(`\r\x1b[K${line}`) : () => {},
    });
    if (io.progress) io.stderr.write("\r\x1b[K");
    for (const line of summaryLines(result)) io.note(line);
    const err = failureOf(result);
    if (err) throw err;
    return 0;
  },
};
export default command;
