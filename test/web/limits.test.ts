import { describe, expect, it } from "vitest";
import { quantile } from "d3-array";
import { MAX_SAMPLE, sampledQuantiles } from "../../web/limits.js";

describe("sampledQuantiles", () => {
  it("gives d3.quantile's R-7 quantiles of the finite values (reference: d3-array 3.2.5)", () => {
    let seed = 7;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (const n of [1, 2, 3, 10, 999, MAX_SAMPLE]) {
      const a = new Float64Array(n);
      for (let i = 0; i < n; i++) a[i] = i % 17 === 5 ? NaN : (rnd() - 0.3) * 1000;
      const qs = [0, 0.001, 0.25, 0.5, 0.99, 0.999, 1];
      const got = sampledQuantiles(a, qs);
      const finite = Array.from(a).filter(Number.isFinite);
      qs.forEach((q, k) => {
        const want = quantile(finite, q);
        if (want === undefined) expect(got[k]).toBeNaN();
        else expect(got[k]).toBe(want);
      });
    }
  });

  it("applies f to each value first and gives NaN when nothing is finite", () => {
    expect(sampledQuantiles(Float64Array.of(-3, 1, -2), [1], Math.abs)).toEqual([3]);
    expect(sampledQuantiles(Float64Array.of(NaN, NaN), [0.5])[0]).toBeNaN();
    expect(sampledQuantiles(new Float64Array(0), [0.5])[0]).toBeNaN();
  });
});
