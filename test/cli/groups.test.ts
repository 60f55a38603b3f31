import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { writeFileSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { mockCsv } from "../flow/mock-rows.js";

let dir: string;
let cleanup: () => void;
let input: string;
let members: Set<number>;

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir());
  const m = makeMockUniverse({ seed: 63, n: 1000, rMaxMpc: 120, clusters: [{ raDeg: 30, decDeg: -20, distMpc: 45, nMembers: 50, sigmaKmS: 400, rCoreMpc: 0.6 }] });
  members = new Set();
  for (let i = 0; i < m.n; i++) if (m.clusterOf[i] === 0) members.add(i);
  input = join(dir, "cat.csv");
  writeFileSync(input, mockCsv(m));
});
afterAll(() => cleanup());

function rowsOf(path: string): { header: string[]; body: string[][] } {
  const lines = readFileSync(path, "utf8").trim().split("\n").filter((l) => !l.startsWith("#"));
  const header = lines[0]!.split(",");
  // skip the units row written under the header
  return { header, body: lines.slice(1).map((l) => l.split(",")).filter((r) => /^-?\d|^G/.test(r[0] ?? "")) };
}

describe("peculiar groups", () => {
  it("adds group_id and group_size, writes the groups table and finds the injected cluster", () => {
    const out = join(dir, "g.csv");
    const gout = join(dir, "groups.csv");
    const r = runCli(["groups", input, "-o", out, "--groups-out", gout, "--json", "-q"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.n_groups).toBeGreaterThanOrEqual(1);
    const { header, body } = rowsOf(out);
    const gi = header.indexOf("group_id");
    expect(header).toContain("group_size");
    expect(body.length).toBe(1000);
    const votes = new Map<string, number>();
    for (const i of members) votes.set(body[i]![gi]!, (votes.get(body[i]![gi]!) ?? 0) + 1);
    const [best, count] = [...votes.entries()].sort((a, b) => b[1] - a[1])[0]!;
    expect(best).not.toBe("-1");
    const size = body.filter((row) => row[gi] === best).length;
    expect(count / size).toBeGreaterThanOrEqual(0.9); // purity
    const g = rowsOf(gout);
    expect(g.header).toEqual(["group_id", "n_members", "ra", "dec", "l", "b", "cz_mean", "cz_mean_err", "sigma_v", "sigma_v_rest", "r_proj_mpc", "n_dist", "dist_c_mpc", "dist_c_err_mpc", "v_pec", "v_pec_err"]);
    const row = g.body.find((x) => x[0] === best)!;
    expect(Number(row[1])).toBe(size);
    expect(Math.abs(Number(row[12]) - 45)).toBeLessThan(6); // 20% per member over ~50 members: ~3% error
  });

  it("says when one group holds most of the sample: the links are too long (percolation)", () => {
    // 150 invented galaxies packed in 0.5 deg and 300 km/s: friends-of-friends joins them all
    const rows = Array.from({ length: 150 }, (_, i) => `p${i},${(180 + (i % 10) * 0.05).toFixed(3)},${(10 + Math.floor(i / 10) * 0.03).toFixed(3)},${5000 + (i % 7) * 40}`);
    const f = join(dir, "blob.csv");
    writeFileSync(f, ["id,ra,dec,cz_cmb", ...rows].join("\n") + "\n");
    const r = runCli(["groups", f, "-o", join(dir, "blob-out.csv"), "--scaling", "constant"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/the largest group holds 150 of the 150 linked galaxies \(100 %\): the linking lengths are likely too long/);
  });

  it("says which rows it could not link and why: no position, no cz_cmb, or cz_cmb <= 0", () => {
    // invented rows: three blueshifted or at rest, one without a position, one without cz_cmb
    const f = join(dir, "unlinked.csv");
    writeFileSync(f, "id,ra,dec,cz_cmb\na,10,20,-100\nb,10,20,-50\nc,10,20,0\nd,10,20,5000\ne,10,20.001,5010\nf,10,20.002,5005\ng,,20,5000\nh,11,20,\n");
    const r = runCli(["groups", f, "-o", join(dir, "unlinked-out.csv"), "--scaling", "constant", "--json"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/5 rows not linked \(group_size 0\): 1 no usable position, 1 no cz_cmb, 3 cz_cmb <= 0/);
    expect(JSON.parse(r.stdout)).toMatchObject({ n_rows: 8, n_groups: 1, n_grouped: 3, n_not_linked: 5 });
  });

  it("links galaxies flagged only for a missing distance, and takes group distances from valid rows", () => {
    // Half the cluster's members lose their distance and are flagged as the velocities step flags them.
    const lines = readFileSync(input, "utf8").trim().split("\n");
    const out = [lines[0] + ",valid,invalid_reason"];
    const dropped = new Set<number>();
    let k = 0;
    for (let i = 0; i < lines.length - 1; i++) {
      const cells = lines[i + 1]!.split(",");
      if (members.has(i) && k++ % 2 === 0) {
        dropped.add(i);
        cells[4] = "";
        cells[5] = "";
        out.push(cells.join(",") + ",false,no usable distance (mu)");
      } else out.push(cells.join(",") + ",true,");
    }
    const partial = join(dir, "partial.csv");
    writeFileSync(partial, out.join("\n") + "\n");
    const o = join(dir, "gp.csv");
    const gout = join(dir, "gp-groups.csv");
    const r = runCli(["groups", partial, "-o", o, "--groups-out", gout, "-q"]);
    expect(r.code).toBe(0);
    const { header, body } = rowsOf(o);
    const gi = header.indexOf("group_id");
    const votes = new Map<string, number>();
    for (const i of members) votes.set(body[i]![gi]!, (votes.get(body[i]![gi]!) ?? 0) + 1);
    const [best] = [...votes.entries()].sort((a, b) => b[1] - a[1])[0]!;
    expect(best).not.toBe("-1");
    let droppedLinked = 0;
    for (const i of dropped) if (body[i]![gi] === best) droppedLinked++;
    expect(droppedLinked / dropped.size).toBeGreaterThanOrEqual(0.8); // as many as the full run links
    const g = rowsOf(gout);
    const row = g.body.find((x) => x[0] === best)!;
    const nDist = Number(row[11]);
    expect(nDist).toBeLessThan(Number(row[1]));
    expect(Math.abs(Number(row[12]) - 45)).toBeLessThan(8); // ~25 members with 20 % distances
  });

  it("takes the published parameters as options and rejects bad ones", () => {
    const out = join(dir, "g2.csv");
    const r = runCli(["groups", input, "-o", out, "--scaling", "constant", "--d0", "1.0", "--v0", "500", "--min-members", "2", "--json", "-q"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.settings.scaling).toBe("constant");
    expect(j.settings.d0Mpc).toBe(1);
    expect(j.settings.minMembers).toBe(2);
    expect(runCli(["groups", input, "-o", out, "--scaling", "wide"]).code).toBe(2);
    expect(runCli(["groups", input, "-o", out, "--min-members", "1"]).code).toBe(2);
  });
});
