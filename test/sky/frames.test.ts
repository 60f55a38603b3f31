import { describe, expect, it } from "vitest";
import { convertPosition, angleDiffDeg } from "../../src/sky/index.js";

// 1e-9 deg: far below any catalogue's precision, above float64 round-off of the rotations.
const TOL_DEG = 1e-9;

describe("ICRS to Galactic", () => {
  it("reproduces the ERFA/SOFA t_icrs2g check value", () => {
    // ERFA test t_icrs2g: (5.9338074302227188, -1.1784870613579944) rad -> (320, -45) deg exactly.
    const [l, b] = convertPosition(5.9338074302227188 * (180 / Math.PI), -1.1784870613579944 * (180 / Math.PI), "icrs", "galactic");
    expect(angleDiffDeg(l, 320)).toBeLessThan(TOL_DEG);
    expect(Math.abs(b - -45)).toBeLessThan(TOL_DEG);
  });
});
