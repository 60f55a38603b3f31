import { describe, expect, it } from "vitest";
import { matchDiagnosticsOf } from "../../web/match-panel.js";

/** Sums agree to rounding (common practice). */
const SUM_TOL = 1e-9;

describe("matchDiagnosticsOf", () => {
  it("reads the layout of peculiar match --report and spreads the chance pairs as r dr", () => {
    const m = matchDiagnosticsOf("m.json", {
      settings: { radiusArcsec: 2, searchRadiusArcsec: 2 },
      counts: { rowsA: 10, rowsB: 12, matchedPairs: 8, unmatchedA: 2, unmatchedB: 4, ambiguous: 1 },
      histogram: { binEdgesArcsec: [0, 1, 2], counts: [6, 2] },
      chance: { expectedChancePairs: 0.8 },
      suggestedRadius: { suggestedArcsec: 1.5 },
    })!;
    expect(m.radiusArcsec).toBe(2);
    expect(m.counts).toEqual([6, 2]);
    // A uniform background gives chance pairs in proportion to the ring area: 1/4 and 3/4 of the total.
    expect(m.chancePerBin![0]!).toBeCloseTo(0.2, 12);
    expect(m.chancePerBin![1]!).toBeCloseTo(0.6, 12);
    expect(Math.abs(m.chancePerBin!.reduce((a, b) => a + b, 0) - 0.8)).toBeLessThan(SUM_TOL);
    expect(m.suggestedRadiusArcsec).toBe(1.5);
    expect(new Map(m.summary).get("ambiguous")).toBe("1");
  });

  it("reads flat snake-case keys and bins given as a list", () => {
    const m = matchDiagnosticsOf("m.json", {
      radius_arcsec: 3,
      separation_histogram: [
        { lo: 0, hi: 1.5, count: 4 },
        { lo: 1.5, hi: 3, count: 1 },
      ],
    })!;
    expect(m.edgesArcsec).toEqual([0, 1.5, 3]);
    expect(m.counts).toEqual([4, 1]);
    expect(m.chancePerBin).toBeNull();
    expect(Number.isNaN(m.chanceTotal)).toBe(true);
  });

  it("is null for a sidecar that is not a match report", () => {
    expect(matchDiagnosticsOf("flow.json", { h0: { value: 70, error: 1 } })).toBeNull();
    expect(matchDiagnosticsOf("x.json", null)).toBeNull();
    expect(matchDiagnosticsOf("x.json", { histogram: { binEdgesArcsec: [0, 1], counts: [1, 2] } })).toBeNull();
  });
});
