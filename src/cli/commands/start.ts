/**
 * `peculiar start` (what `npm start` runs): the sample plan into ./out, then the view of the
 * final table on 127.0.0.1, printing its URL. `--no-serve` stops after the run (for tests).
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags } from "../command.js";
import { usageError } from "../../errors.js";
import { failureOf, readPlan, runPlan } from "../../pipeline/run.js";
import { summaryLines } from "../../pipeline/describe.js";
import { samplePlanPath } from "../../pipeline/samples.js";
import { startViewServer } from "../../server/index.js";

const HELP = `usage: peculiar start [-o OUTDIR] [--plan PLAN.json] [--port P] [--host H] [--no-serve]

Runs the bundled sample plan (sample-catalogues/plan.json: an invented redshift survey, two
distance catalogues and the truth they were made from) into OUTDIR (default ./out), prints the
recovered H0, bulk flow and cluster beside the injected truth, then serves the view of the final
table and prints its URL. Ctrl-C stops the server. This is what 'npm start' runs.

options:
  -o, --out OUTDIR   output folder (default ./out)
  --plan PLAN.json   run this plan instead of the sample plan
  --port P           port for the view (default 0: any free port)
  --host H           address to bind (default 127.0.0.1)
  --no-serve         run the plan and stop (no server)
  -q, --quiet        no summary on stderr

See 'peculiar run --help' for the plan format and the files written.
`;

const command: Command = {
  name: "start",
  summary: "run the sample plan into ./out and serve its view",
  help: HELP,
  run: async (argv, io) => {
    const { values, positionals } = parseFlags(
      argv,
      { ...COMMON_FLAGS, out: { type: "string", short: "o" }, plan: { type: "string" }, port: { type: "string" }, host: { type: "string" }, "no-serve": { type: "boolean" } },
      "start",
    );
    if (positionals.length > 0) throw usageError("start: takes no positional arguments; see 'peculiar start --help'", { value: positionals[0] });
    const port = numberFlag(values.port, "port", 0, (x) => Number.isInteger(x) && x >= 0 && x <= 65535, "an integer port in [0, 65535]");
    const plan = await readPlan(values.plan ?? samplePlanPath());
    io.note(`start: running ${plan.file}`);
    const result = await runPlan(plan, {
      outDir: values.out ?? "out",
      progress: io.progress ? (line) => io.stderr.write(`\r\x1b[K${line}`) : () => {},
    });
    if (io.progress) io.stderr.write("\r\x1b[K");
    for (const line of summaryLines(result)) io.note(line);
    const err = failureOf(result);
    if (err) throw err;
    if (values["no-serve"]) return 0;
    if (!result.final) throw usageError("start: the plan produced no final table to show");
    const server = await startViewServer({ file: result.final, port, host: values.host ?? "127.0.0.1", allSidecars: true });
    io.note(`start: serving ${server.rows} rows; Ctrl-C to stop`);
    io.stdout.write(server.url + "\n");
    await new Promise<void>((done) => {
      const stop = () => {
        process.off("SIGINT", stop);
        process.off("SIGTERM", stop);
        void server.close().then(done);
      };
      process.on("SIGINT", stop);
      process.on("SIGTERM", stop);
    });
    return 0;
  },
};
export default command;
