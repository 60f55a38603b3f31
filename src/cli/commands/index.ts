/**
 * The command table. Each command lives in its own file and is loaded on demand,
 * so `peculiar --help` stays fast and one command's dependencies never slow another.
 */
import type { Command } from "../command.js";

export interface CommandEntry {
  name: string;
  summary: string;
  load: () => Promise<Command>;
  /** Started before the command is loaded (match: its helper thread, match-early.ts). */
  early?: (args: string[]) => Promise<void>;
}

export const COMMANDS: CommandEntry[] = [
  { name: "inspect", summary: "show a catalogue's columns, detected roles, units and invalid rows", load: async () => (await import("./inspect.js")).default },
  { name: "convert", summary: "convert between CSV/TSV, VOTable, FITS and Arrow; add Galactic/supergalactic columns", load: async () => (await import("./convert.js")).default },
  { name: "match", summary: "cross-match two catalogues on the sky (and in velocity)", load: async () => (await import("./match.js")).default, early: async (args) => (await import("./match-early.js")).startEarly(args) },
  { name: "dedupe", summary: "find rows of one catalogue that are the same object", load: async () => (await import("./dedupe.js")).default },
  { name: "combine", summary: "harmonise zero points of distance catalogues and combine their distances", load: async () => (await import("./combine.js")).default },
  { name: "velocities", summary: "redshift frames, distances and peculiar velocities with errors", load: async () => (await import("./velocities.js")).default },
  { name: "flag", summary: "flag outlier peculiar velocities", load: async () => (await import("./flag.js")).default },
  { name: "groups", summary: "friends-of-friends groups in redshift space", load: async () => (await import("./groups.js")).default },
  { name: "flow", summary: "fit H0 and the bulk flow", load: async () => (await import("./flow.js")).default },
  { name: "recentre", summary: "the velocity field seen from another galaxy, group or point", load: async () => (await import("./recentre.js")).default },
  { name: "run", summary: "run a whole plan: match, combine, velocities, flag, groups, flow, recentre", load: async () => (await import("./run.js")).default },
  { name: "view", summary: "serve the interactive view of a catalogue on 127.0.0.1", load: async () => (await import("./view.js")).default },
  { name: "start", summary: "run the sample plan into ./out and serve its view", load: async () => (await import("./start.js")).default },
];
