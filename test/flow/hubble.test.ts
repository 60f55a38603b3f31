import { describe, it, expect } from "vitest";
import { fitHubbleFlow, HubbleSums, invertSymmetric } from "../../src/flow/hubble.js";

const TIGHT = 1e-9; // km/s or km/s/Mpc: round-off only (common practice)

function rows(x: number[], y: number[], e: number[][]) {
  return {
    x: Float64Array.from(x),
    y: Float64Array.from(y),
    ex: Float64Array.from(e.map((v) => v[0]!)),
    ey: Float64Array.from(e.map((v) => v[1]!)),
    ez: Float64Array.from(e.map((v) => v[2]!)),
  };
}

describe("fitHubbleFlow", () => {
  it("finds the dipole of six objects on the axes (Kaiser 1988 estimator; sanity case of domain reference 9.1)", () => {
    const e = [[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]];
    const f = fitHubbleFlow({ ...rows([0, 0, 0, 0, 0, 0], [300, -300, 0, 0, 0, 0], e) }, { sigmaStar: 100, fixedSlope: 0 });
    expect(f.dipole[0]).toBeCloseTo(300, 9);
    expect(Math.abs(f.dipole[1])).toBeLessThan(TIGHT);
    expect(Math.abs(f.dipole[2])).toBeLessThan(TIGHT);
    // A = sum w n n^T = diag(2, 2, 2) / 100^2, so Cov = diag(5000) (km/s)^2
    expect(f.cov[5]).toBeCloseTo(5000, 6);
    expect(f.dipoleErr[0]).toBeCloseTo(Math.sqrt(5000), 9);
  });

  it("recovers slope and dipole exactly from noise-free rows", () => {
    const x: number[] = [];
    const y: number[] = [];
    const e: number[][] = [];
    for (let i = 0; i < 40; i++) {
      const t = (i * 2.399963) % (2 * Math.PI);
      const zc = -1 + (2 * (i + 0.5)) / 40;
      const r = Math.sqrt(1 - zc * zc);
      const u = [r * Math.cos(t), r * Math.sin(t), zc];
      const d = 5 + 3 * i;
      x.push(d);
      e.push(u);
      y.push(72 * d + 200 * u[0]! - 100 * u[1]! + 50 * u[2]!);
    }
    const f = fitHubbleFlow(rows(x, y, e), { sigmaStar: 0 });
    expect(Math.abs(f.slope - 72)).toBeLessThan(TIGHT);
    expect(Math.abs(f.dipole[0] - 200)).toBeLessThan(1e-7);
    expect(Math.abs(f.dipole[1] + 100)).toBeLessThan(1e-7);
    expect(Math.abs(f.dipole[2] - 50)).toBeLessThan(1e-7);
    expect(f.residualRms).toBeLessThan(1e-8);
    expect(f.nUsed).toBe(40);
    expect(f.dof).toBe(36);
  });

  it("leaves out NaN rows and rows not in use, but still gives their residuals", () => {
    const f = fitHubbleFlow(
      { ...rows([10, 20, 30, NaN], [700, 1400, 99999, 1], [[1, 0, 0], [1, 0, 0], [1, 0, 0], [1, 0, 0]]), use: Uint8Array.from([1, 1, 0, 1]) },
      { fitDipole: false },
    );
    expect(f.nUsed).toBe(2);
    expect(f.slope).toBeCloseTo(70, 10);
    expect(f.residual[2]).toBeCloseTo(99999 - 2100, 6);
    expect(Number.isNaN(f.residual[3]!)).toBe(true);
  });

  it("reports a singular fit as NaN with ok = false instead of throwing", () => {
    const empty = fitHubbleFlow(rows([], [], []));
    expect(empty.ok).toBe(false);
    expect(Number.isNaN(empty.slope)).toBe(true);
    const one = fitHubbleFlow(rows([10], [700], [[1, 0, 0]]));
    expect(one.ok).toBe(false);
    // all directions on one axis: the dipole's y and z are undetermined
    const flat = fitHubbleFlow(rows([10, 20, 30, 40, 50], [1, 2, 3, 4, 5], [[1, 0, 0], [1, 0, 0], [-1, 0, 0], [1, 0, 0], [-1, 0, 0]]));
    expect(flat.ok).toBe(false);
  });

  it("inverts a symmetric matrix (A A^-1 = I)", () => {
    const a = Float64Array.from([4, 1, 0.5, 1, 3, 0.2, 0.5, 0.2, 2]);
    const inv = invertSymmetric(a, 3)!;
    for (let r = 0; r < 3; r++)
      for (let c = 0; c < 3; c++) {
        let s = 0;
        for (let k = 0; k < 3; k++) s += a[r * 3 + k]! * inv[k * 3 + c]!;
        expect(Math.abs(s - (r === c ? 1 : 0))).toBeLessThan(1e-14);
      }
  });

  it("gives from its running sums the parameters and the chi2 of the residual sum (HubbleSums)", () => {
    // seeded rows (common practice: chi2 = sum w r^2 = sum w y^2 - p . b at the solution of A p = b)
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const n = 500;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    const ex = new Float64Array(n);
    const ey = new Float64Array(n);
    const ez = new Float64Array(n);
    const sigma = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const u = 2 * rnd() - 1;
      const ph = 2 * Math.PI * rnd();
      const c = Math.sqrt(1 - u * u);
      ex[i] = c * Math.cos(ph);
      ey[i] = c * Math.sin(ph);
      ez[i] = u;
      x[i] = 10 + 100 * rnd();
      sigma[i] = 50 + 300 * rnd();
      y[i] = 70 * x[i]! + 200 * ex[i]! - 100 * ez[i]! + 400 * (rnd() - 0.5);
    }
    for (const [fitSlope, fitDipole] of [[true, true], [true, false], [false, true]] as const) {
      const f = fitHubbleFlow({ x, y, ex, ey, ez, sigma }, { sigmaStar: 150, fitDipole, ...(fitSlope ? {} : { fixedSlope: 0 }) });
      const sums = new HubbleSums();
      for (let i = 0; i < n; i++) sums.add(x[i]!, y[i]!, ex[i]!, ey[i]!, ez[i]!, 1 / (sigma[i]! ** 2 + 150 ** 2));
      const s = sums.solve(fitSlope, fitDipole);
      expect(s.ok).toBe(true);
      expect(sums.rows).toBe(n);
      expect(s.params[0]).toBe(fitSlope ? f.slope : 0);
      for (let c = 0; c < 3; c++) expect(s.params[c + 1]).toBe(f.dipole[c]);
      expect(Math.abs(s.chi2 - f.chi2)).toBeLessThan(1e-9 * f.chi2);
    }
  });
});
