import { describe, expect, it } from "vitest";
import { parsePlan, STEP_NAMES, type StepName } from "../../src/pipeline/plan.js";
import { runSteps, stepError, type StepImpl } from "../../src/pipeline/runner.js";
import { PeculiarError } from "../../src/errors.js";

const MIN_PLAN = JSON.stringify({
  inputs: { redshifts: { file: "z.csv" }, distances: [{ file: "d1.vot", alias: "one" }, { file: "sub/d2.fits" }] },
});

describe("parsePlan", () => {
  it("fills every step with its defaults and resolves paths against the plan's folder", () => {
    const p = parsePlan(MIN_PLAN, "/data/job/plan.json");
    expect(p.redshifts.file).toBe("/data/job/z.csv");
    expect(p.redshifts.alias).toBe("z");
    expect(p.distances.map((d) => d.alias)).toEqual(["one", "d2"]);
    expect(p.distances[1]!.file).toBe("/data/job/sub/d2.fits");
    expect([...p.enabled]).toEqual([...STEP_NAMES]);
    expect(p.steps.velocities).toEqual({ frame: "cmb", h0: 70, omegaM: 0.3, estimator: "exact" });
  });

  it("skips a step set to false and keeps the settings given for another", () => {
    const o = JSON.parse(MIN_PLAN);
    o.steps = { groups: false, flag: { kappa: 3, method: "mad" } };
    const p = parsePlan(JSON.stringify(o), "/p.json");
    expect(p.enabled.has("groups")).toBe(false);
    expect(p.steps.flag).toEqual({ method: "mad", kappa: 3, sigmaStarKmS: 250 });
  });

  it.each([
    [{ steps: { flow: { sigmaStar: 3 } } }, /steps\.flow\.sigmaStar: unknown key/],
    [{ steps: { match: { radius: "3" } } }, /steps\.match\.radius: the angle needs a unit/],
    [{ steps: { match: { radius: "2parsec" } } }, /steps\.match\.radius: unknown angle unit/],
    [{ steps: { velocities: { frame: "galactic" } } }, /steps\.velocities\.frame: bad value.*expected helio, lsr, gsr, lg, cmb/],
    [{ steps: { combine: { reference: "nope" } } }, /steps\.combine\.reference: is not the alias/],
    [{ inputs: { redshifts: { file: "z.csv" }, distances: [] } }, /inputs\.distances: must be a non-empty list/],
    [{ inputs: { redshifts: { file: "a.csv" }, distances: [{ file: "a.vot" }] } }, /same alias/],
    [{ colour: "blue" }, /plan key colour: unknown key/],
  ])("rejects a bad plan with the key that is wrong (%j)", (patch, message) => {
    const o = { ...JSON.parse(MIN_PLAN), ...patch };
    expect(() => parsePlan(JSON.stringify(o), "/job/plan.json")).toThrow(message);
    try {
      parsePlan(JSON.stringify(o), "/job/plan.json");
    } catch (e) {
      expect((e as PeculiarError).place.file).toBe("/job/plan.json");
    }
  });

  it("says a plan that is not JSON is not JSON, naming the file", () => {
    expect(() => parsePlan("{ inputs: ", "/job/plan.json")).toThrow(/\/job\/plan\.json: not valid JSON/);
  });
});

function impls(log: StepName[], failAt?: StepName): Record<StepName, StepImpl<null>> {
  const out = {} as Record<StepName, StepImpl<null>>;
  for (const name of STEP_NAMES) {
    out[name] = () => {
      log.push(name);
      if (name === failAt) throw new PeculiarError("input", `column cz_cmb is all NaN`);
      return { outputs: [`${name}.arrow`], numbers: { rows: 1 } };
    };
  }
  return out;
}

describe("runSteps", () => {
  const ctx = (plan = parsePlan(MIN_PLAN, "/p.json")) => ({ plan, outDir: "/out", state: null, progress: () => {} });

  it("runs every step in order and records each one's outputs", async () => {
    const log: StepName[] = [];
    const r = await runSteps(ctx(), impls(log));
    expect(log).toEqual([...STEP_NAMES]);
    expect(r.status).toBe("ok");
    expect(r.steps.every((s) => s.status === "ok" && s.outputs.length === 1)).toBe(true);
  });

  it("stops at a failing step, names it with its reason, and keeps the records of the steps before it", async () => {
    const log: StepName[] = [];
    const seen: string[] = [];
    const r = await runSteps(ctx(), impls(log, "groups"), { afterStep: (rec) => seen.push(rec.steps.map((s) => s.status).join(",")) });
    expect(log).toEqual(["match", "combine", "velocities", "flag", "groups"]);
    expect(r.status).toBe("failed");
    expect(r.failedStep).toBe("groups");
    const byName = Object.fromEntries(r.steps.map((s) => [s.step, s]));
    expect(byName.flag!.status).toBe("ok");
    expect(byName.groups!.reason).toBe("column cz_cmb is all NaN");
    expect(byName.flow!.status).toBe("not run");
    expect(byName.flow!.reason).toMatch(/step 'groups' failed/);
    expect(seen.at(-1)).toMatch(/ok,ok,ok,ok,failed,not run,not run/);
    const err = stepError(r, "/out");
    expect(err.code).toBe("step");
    expect(err.message).toBe("step 'groups' failed: column cz_cmb is all NaN; outputs of match, combine, velocities, flag kept in /out");
  });

  it("skips the steps that need a step the plan turned off", async () => {
    const o = JSON.parse(MIN_PLAN);
    o.steps = { velocities: false };
    const log: StepName[] = [];
    const r = await runSteps(ctx(parsePlan(JSON.stringify(o), "/p.json")), impls(log));
    expect(log).toEqual(["match", "combine"]);
    const flow = r.steps.find((s) => s.step === "flow")!;
    expect(flow.status).toBe("skipped");
    expect(flow.reason).toMatch(/needs 'velocities'/);
  });
});
