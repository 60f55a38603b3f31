/**
 * The committed sample files hold the blemishes the scenario promises (sample-catalogues/README.md),
 * as the loaders see them. Counts are the generator's inputs (sample-catalogues/generate.ts SCENARIO).
 */
import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { loadCatalogue } from "../../src/catalogue/load.js";
import { float64Column, nullMask, stringColumn } from "../../src/catalogue/columns.js";
import { countInvalid } from "../../src/catalogue/validity.js";
import { SCENARIO } from "../../sample-catalogues/generate.js";

const DIR = join(__dirname, "..", "..", "sample-catalogues");
const truth = JSON.parse(readFileSync(join(DIR, "truth.json"), "utf8"));

describe("the sample catalogues", () => {
  it("give the survey's galaxies with Dec between -1 and 0 deg negative declinations", async () => {
    const c = await loadCatalogue(join(DIR, "veltrona-redshifts.csv"), { overrides: { ra: "ra_hms", dec: "dec_dms", cz: "cz_helio" } });
    expect(c.table.numRows).toBe(SCENARIO.nSurvey);
    const text = stringColumn(c.table, "dec_dms");
    let nearZero = 0;
    for (let i = 0; i < text.length; i++) {
      if (!text[i]!.startsWith("-00:")) continue;
      nearZero++;
      expect(c.decDeg[i]!).toBeLessThan(0);
      expect(c.decDeg[i]!).toBeGreaterThan(-1);
    }
    expect(nearZero).toBe(truth.catalogues.redshifts.decBetweenMinus1And0);
    expect(nearZero).toBeGreaterThan(100);
    expect(nullMask(c.table, "cz_helio").reduce((a, b) => a + b, 0)).toBe(SCENARIO.surveyWithoutCz);
    expect(new Set(stringColumn(c.table, "vrs_id")).size).toBe(SCENARIO.nSurvey);
  });

  it("keep Caldera's impossible positions as flagged rows and its missing values as nulls", async () => {
    const c = await loadCatalogue(join(DIR, "caldera-tf.vot"));
    expect(c.table.numRows).toBe(SCENARIO.caldera.n);
    expect(c.roles).toMatchObject({ ra: "raj2000", dec: "dej2000", mu: "dm", mu_err: "e_dm" });
    expect(countInvalid(c.table)).toBe(2); // the declination of 97.31 deg and the RA of -4.2 deg
    expect(nullMask(c.table, "dm").reduce((a, b) => a + b, 0)).toBe(SCENARIO.caldera.missingMu);
    expect(nullMask(c.table, "e_dm").reduce((a, b) => a + b, 0)).toBe(SCENARIO.caldera.missingMuErr);
  });

  it("carry the Sorrel zero-point offset in the FITS moduli", async () => {
    const c = await loadCatalogue(join(DIR, "sorrel-fp.fits"));
    expect(c.table.numRows).toBe(SCENARIO.sorrel.n);
    expect(c.roles).toMatchObject({ mu: "DISTMOD", mu_err: "DISTMOD_ERR" });
    const err = float64Column(c.table, "DISTMOD_ERR");
    // sigma_mu = (5 / ln 10) x fractional distance error: mu = 5 log10(D / Mpc) + 25 (Hogg 1999, astro-ph/9905116)
    expect(err[0]!).toBeCloseTo((5 / Math.LN10) * SCENARIO.sorrel.distErrFrac, 3);
    expect(truth.zeroPoints).toEqual([{ alias: "sorrel", relativeTo: "caldera", offsetMag: SCENARIO.sorrel.zeroPointOffsetMag }]);
  });
});
