import { describe, expect, it, beforeAll } from "vitest";
import { buildOnce, runCli } from "../cli-helpers.js";

beforeAll(() => buildOnce());

describe("command-line flag errors", () => {
  it("are one line with a usage exit code, even where node's own message spans lines", () => {
    // node's parseArgs explains an option value starting with a dash over three lines.
    const r = runCli(["flow", "x.arrow", "--h0", "-5"]);
    expect(r.code).toBe(2);
    expect(r.stderr.trimEnd().split("\n")).toHaveLength(1);
    expect(r.stderr).toMatch(/^peculiar flow: Option '--h0' argument is ambiguous\. .*--h0=-XYZ'; see 'peculiar flow --help'/);
  });

  it("name an unknown option once, with the command's help", () => {
    const r = runCli(["groups", "x.arrow", "--bogus"]);
    expect(r.code).toBe(2);
    expect(r.stderr.trim()).toBe("peculiar groups: Unknown option '--bogus'; see 'peculiar groups --help'");
  });

  it("check --h0 and --omega-m the same way, before reading the input", () => {
    // recentre reads its input first: its --h0 defaults to the value fitted from the file.
    for (const cmd of ["velocities", "flag", "groups", "flow"]) {
      const base = [cmd, "no-such-input.arrow", "-o", "y.arrow"];
      const h = runCli([...base, "--h0", "0"]);
      expect(h.code).toBe(2);
      expect(h.stderr).toContain(`bad value for --h0 (got "0"); expected a number in (0, 1000) km/s/Mpc`);
      const m = runCli([...base, "--omega-m", "1.5"]);
      expect(m.code).toBe(2);
      expect(m.stderr).toContain(`bad value for --omega-m (got "1.5"); expected a number in [0, 1]`);
    }
  });
});
