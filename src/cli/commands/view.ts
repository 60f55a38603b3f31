/**
 * `peculiar view FILE [--port P] [--host H]`: serves the interactive view of a catalogue and prints
 * its URL on stdout. Runs until SIGINT or SIGTERM, then closes the server and exits 0.
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags } from "../command.js";
import { usageError } from "../../errors.js";
import { startViewServer } from "../../server/index.js";

const HELP = `usage: peculiar view FILE [--port P] [--host H] [--all-sidecars]

Serves the interactive view of FILE (Arrow IPC, or any format peculiar reads) and prints its URL.
The page shows the sky map, the Hubble diagram, the supergalactic slices, re-centring
on any galaxy or group, and the match diagnostics when a match report sits next to FILE.

JSON files next to FILE whose names start with its stem (FILE.match.json, ...) are offered
to the page as sidecars (match report, flow summary).

options:
  --port P          port to listen on (default 0: any free port)
  --host H          address to bind (default 127.0.0.1; other hosts expose the data to the network)
  --all-sidecars    offer every .json file in FILE's folder, not only those named after FILE
  -q, --quiet       no notes on stderr
`;

const command: Command = {
  name: "view",
  summary: "serve the interactive view of a catalogue on 127.0.0.1",
  help: HELP,
  run: async (argv, io) => {
    const { values, positionals } = parseFlags(
      argv,
      { ...COMMON_FLAGS, port: { type: "string" }, host: { type: "string" }, "all-sidecars": { type: "boolean" } },
      "view",
    );
    if (positionals.length !== 1) throw usageError("view: give exactly one catalogue file; see 'peculiar view --help'");
    const port = numberFlag(values.port, "port", 0, (x) => Number.isInteger(x) && x >= 0 && x <= 65535, "an integer port in [0, 65535]");
    const host = values.host ?? "127.0.0.1";
    const server = await startViewServer({ file: positionals[0]!, port, host, allSidecars: values["all-sidecars"] ?? false });
    io.note(`view: ${server.rows} rows${server.sidecars.length ? `, sidecars: ${server.sidecars.join(", ")}` : ""}; Ctrl-C to stop`);
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
    io.note("view: stopped");
    return 0;
  },
};
export default command;
