import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { crossMatch } from "../../src/crossmatch/match.js";
import { ARCSEC } from "../../src/sky/angles.js";

interface Row {
  kind: string;
  ra1: number;
  dec1: number;
  ra2: number;
  dec2: number;
  sep_deg: number;
}

// astropy 5.2.1 fixture: SkyCoord.separation of ICRS pairs (test/reference/make_sky_fixtures.py).
const fixture = JSON.parse(readFileSync(join(__dirname, "../reference/sky/separation.json"), "utf8")) as { library: string; rows: Row[] };

/**
 * Tolerance: 1e-8 arcsec plus 1e-12 relative. Unit vectors in float64 resolve ~1e-16 rad = 2e-11 arcsec;
 * the fixture's own Vincenty evaluation and the degree inputs add rounding of the same order.
 */
const ABS_TOL_ARCSEC = 1e-8;
const REL_TOL = 1e-12;

describe("sep_arcsec against the astropy 5.2.1 separation fixture", () => {
  it("the fixture is the one made by astropy 5.2.1", () => {
    expect(fixture.library).toBe("astropy 5.2.1");
  });

  for (const kind of ["below_0.01_arcsec", "poles", "ra_seam", "random", "near_180_deg"]) {
    it(`every ${kind} pair is found at a radius just above its separation, with astropy's separation`, () => {
      const rows = fixture.rows.filter((r) => r.kind === kind);
      expect(rows.length).toBeGreaterThan(0);
      let worst = 0;
      for (const r of rows) {
        const want = r.sep_deg * 3600;
        const radius = want * (1 + 1e-9) + 1e-9;
        const m = crossMatch({ raDeg: [r.ra1], decDeg: [r.dec1] }, { raDeg: [r.ra2], decDeg: [r.dec2] }, { radiusArcsec: Math.min(radius, 648000) });
        expect(m.chosen.length).toBe(1);
        const got = m.candidates.sepRad[m.chosen[0]!]! / ARCSEC;
        const err = Math.abs(got - want);
        expect(err).toBeLessThan(ABS_TOL_ARCSEC + REL_TOL * want);
        worst = Math.max(worst, err);
      }
      expect(worst).toBeLessThan(ABS_TOL_ARCSEC + REL_TOL * 648000);
    });
  }
});
