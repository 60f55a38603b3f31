#!/usr/bin/env node
/**
 * The bin entry: picks the command, runs it, and is the only place that catches errors.
 * An error prints as one line on stderr (the stack only with --verbose) and exits non-zero.
 */
import { COMMANDS } from "./commands/index.js";
import type { Io } from "./command.js";
import { PeculiarError } from "../errors.js";

const EXIT_USAGE = 2;
const EXIT_FAILURE = 1;

function topHelp(): string {
  const width = Math.max(...COMMANDS.map((c) => c.name.length));
  const lines = COMMANDS.map((c) => `  ${c.name.padEnd(width)}  ${c.summary}`);
  return [
    "peculiar: galaxy catalogues, peculiar velocities and the flow field",
    "",
    "usage: peculiar COMMAND [options]   (peculiar COMMAND --help for each)",
    "",
    "commands:",
    ...lines,
    "",
    "common options: --help, --quiet (no summaries on stderr), --verbose (stack traces on error)",
  ].join("\n");
}

async function main(argv: string[]): Promise<number> {
  const verbose = argv.includes("--verbose");
  const quiet = argv.includes("--quiet") || argv.includes("-q");
  const io: Io = {
    stdout: process.stdout,
    stderr: process.stderr,
    progress: Boolean(process.stderr.isTTY) && !quiet,
    quiet,
    note: (line) => {
      if (!quiet) process.stderr.write(line + "\n");
    },
  };
  const [name, ...rest] = argv;
  if (name === undefined || name === "--help" || name === "-h" || name === "help") {
    io.stdout.write(topHelp() + "\n");
    return name === undefined ? EXIT_USAGE : 0;
  }
  if (name === "--version") {
    io.stdout.write("peculiar 0.1.0\n");
    return 0;
  }
  const entry = COMMANDS.find((c) => c.name === name);
  if (!entry) {
    process.stderr.write(`peculiar: unknown command '${name}'; see 'peculiar --help'\n`);
    return EXIT_USAGE;
  }
  try {
    // a head start only (match: its helper thread); the command itself decides and reports
    if (entry.early && !rest.includes("--help") && !rest.includes("-h")) await entry.early(rest).catch(() => {});
    const cmd = await entry.load();
    if (rest.includes("--help") || rest.includes("-h")) {
      io.stdout.write(cmd.help.trimEnd() + "\n");
      return 0;
    }
    return await cmd.run(rest, io);
  } catch (e) {
    if (e instanceof PeculiarError) {
      process.stderr.write(`peculiar ${name}: ${e.message}\n`);
      if (verbose && e.stack) process.stderr.write(e.stack + "\n");
      return e.code === "usage" ? EXIT_USAGE : EXIT_FAILURE;
    }
    const err = e as Error;
    process.stderr.write(`peculiar ${name}: internal error: ${err?.message ?? String(e)}\n`);
    if (verbose && err?.stack) process.stderr.write(err.stack + "\n");
    else process.stderr.write("(run again with --verbose for the stack trace)\n");
    return EXIT_FAILURE;
  }
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (e) => {
    process.stderr.write(`peculiar: ${String(e)}\n`);
    process.exitCode = EXIT_FAILURE;
  },
);
