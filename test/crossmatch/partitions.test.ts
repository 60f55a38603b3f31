import { describe, expect, it } from "vitest";
import { partitionEdges, skyPartitions } from "../../src/crossmatch/partitions.js";
import { blockOfPoints, skyPoints } from "../../src/crossmatch/zones.js";
import { ARCSEC } from "../../src/sky/angles.js";
import { hardSky } from "./sky-fixtures.js";

describe("sky partitions", () => {
  it("every query row with a position has exactly one owner band and the bands cover the sky", () => {
    const S = hardSky(1000, 12);
    const q = skyPoints(S.ra, S.dec);
    const blk = blockOfPoints(q);
    const edges = partitionEdges(blk.decRad, 5);
    expect(edges[0]).toBe(-Math.PI / 2);
    expect(edges[5]).toBe(Math.PI / 2);
    const parts = skyPartitions(blk, blk, 10 * ARCSEC, edges);
    const owners = new Int32Array(q.length);
    for (const p of parts) for (const i of p.query.row) owners[i]!++;
    for (let i = 0; i < q.length; i++) expect(owners[i]).toBe(Number.isNaN(q.p[5 * i + 1]!) ? 0 : 1); // the last row has no RA: no owner
  });

  it("a band's index rows include its margin of R on both sides", () => {
    const q = skyPoints([0, 0, 0, 0], [-0.001, 0, 0.0005, 0.0011]);
    const edges = Float64Array.of(-Math.PI / 2, 0, Math.PI / 2);
    const R = 0.001 * (Math.PI / 180);
    const blk = blockOfPoints(q);
    const [south, north] = skyPartitions(blk, blk, R, edges);
    expect(Array.from(south!.query.row)).toEqual([0]);
    expect(Array.from(south!.index.row)).toEqual([0, 1, 2]); // 0.0005 deg is within the 0.001 deg margin
    expect(Array.from(north!.query.row)).toEqual([1, 2, 3]);
    expect(Array.from(north!.index.row)).toEqual([0, 1, 2, 3]);
  });
});
