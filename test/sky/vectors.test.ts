import { describe, expect, it } from "vitest";
import { randomLcg } from "d3-random";
import { angleBetween, hypot3 } from "../../src/sky/vectors.js";

const SPECIAL = [0, -0, 1, -1, 0.5, 3, 4, 5e-324, 1e-320, 1e308, Number.MAX_VALUE, Infinity, -Infinity, NaN];

/** The same number, NaN included. */
function same(x: number, y: number): boolean {
  return x === y || (x !== x && y !== y);
}

describe("hypot3", () => {
  it("gives Math.hypot's number for zeros, subnormals, the largest doubles, infinities and NaN", () => {
    // reference: the running engine's Math.hypot (ECMAScript 2024 §21.3.2.18)
    for (const x of SPECIAL) for (const y of SPECIAL) for (const z of SPECIAL) expect(same(hypot3(x, y, z), Math.hypot(x, y, z)), `${x}, ${y}, ${z}`).toBe(true);
  });

  it("gives Math.hypot's number for cross products of nearby unit vectors and for triples of any magnitude", () => {
    const u = randomLcg(12345);
    let mismatches = 0;
    for (let k = 0; k < 200000; k++) {
      const r = 2 * Math.PI * u();
      const d = Math.asin(2 * u() - 1);
      const e = 10 ** (-12 * u());
      const r2 = r + (u() - 0.5) * e;
      const d2 = d + (u() - 0.5) * e;
      const [ax, ay, az] = [Math.cos(d) * Math.cos(r), Math.cos(d) * Math.sin(r), Math.sin(d)];
      const [bx, by, bz] = [Math.cos(d2) * Math.cos(r2), Math.cos(d2) * Math.sin(r2), Math.sin(d2)];
      const [cx, cy, cz] = [ay * bz - az * by, az * bx - ax * bz, ax * by - ay * bx];
      if (!same(hypot3(cx, cy, cz), Math.hypot(cx, cy, cz))) mismatches++;
      const s = () => (u() < 0.5 ? -1 : 1) * (u() < 0.05 ? 0 : u() * 10 ** (Math.floor(600 * u()) - 300));
      const [x, y, z] = [s(), s(), s()];
      if (!same(hypot3(x, y, z), Math.hypot(x, y, z))) mismatches++;
      if (!same(angleBetween(ax, ay, az, bx, by, bz), Math.atan2(Math.hypot(cx, cy, cz), ax * bx + ay * by + az * bz))) mismatches++;
    }
    expect(mismatches).toBe(0);
  });
});
