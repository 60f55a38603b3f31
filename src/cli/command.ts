/**
 * What a CLI command is: a name, a one-line summary, a help text, its flags and a run function.
 * Commands parse flags with `parseFlags`, call the library, and format. They never catch errors:
 * main.ts does, once.
 */
import { parseArgs, type ParseArgsConfig } from "node:util";
import { usageError } from "../errors.js";
import { DEFAULT_COSMOLOGY } from "../cosmology/distances.js";

export interface Io {
  stdout: NodeJS.WritableStream;
  stderr: NodeJS.WritableStream;
  /** True when stderr is a terminal: only then do commands draw progress. */
  progress: boolean;
  /** --quiet: no summaries on stderr. */
  quiet: boolean;
  /** Writes one line to stderr unless quiet. */
  note(line: string): void;
}

export interface Command {
  name: string;
  summary: string;
  /** Full help: usage line, description, flags. Printed by `peculiar CMD --help`. */
  help: string;
  run(argv: string[], io: Io): Promise<number>;
}

type Options = NonNullable<ParseArgsConfig["options"]>;

/** parseArgs with our error style: unknown flags and missing values become one-line usage errors. */
export function parseFlags<O extends Options>(argv: string[], options: O, command: string) {
  try {
    return parseArgs({ args: argv, options, allowPositionals: true, strict: true });
  } catch (e) {
    const raw = e instanceof Error ? e.message.replace(/\. To specify a positional.*$/s, "") : String(e);
    // node's messages can span lines; errors here are one line.
    const msg = raw.split("\n").map((l) => l.trim()).filter((l) => l !== "").join(" ").replace(/\.$/, "");
    throw usageError(`${msg}; see 'peculiar ${command} --help'`);
  }
}

/** A number flag, checked. */
export function numberFlag(value: string | undefined, flag: string, fallback: number, check?: (x: number) => boolean, expected?: string): number {
  if (value === undefined) return fallback;
  const x = Number(value);
  if (value.trim() === "" || !Number.isFinite(x) || (check && !check(x))) {
    throw usageError(`bad value for --${flag}`, { value, expected: expected ?? "a number" });
  }
  return x;
}

/** --h0, checked: km/s/Mpc in (0, 1000). */
export function h0Flag(value: string | undefined, fallback: number = DEFAULT_COSMOLOGY.h0): number {
  return numberFlag(value, "h0", fallback, (x) => x > 0 && x < 1000, "a number in (0, 1000) km/s/Mpc");
}

/** --omega-m, checked: the matter density of a flat model, in [0, 1]. */
export function omegaMFlag(value: string | undefined): number {
  return numberFlag(value, "omega-m", DEFAULT_COSMOLOGY.omegaM, (x) => x >= 0 && x <= 1, "a number in [0, 1]");
}

/** Flags every command accepts. Spread into a command's option table. */
export const COMMON_FLAGS = {
  help: { type: "boolean", short: "h" },
  quiet: { type: "boolean", short: "q" },
  verbose: { type: "boolean" },
} as const;
