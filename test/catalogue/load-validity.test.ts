import { describe, expect, it } from "vitest";
import { tableFromColumns, stringColumn } from "../../src/catalogue/columns.js";
import { flagRows, countInvalid, validMask, invalidRows, invalidReasons, withValidity } from "../../src/catalogue/validity.js";

function plain(n: number) {
  return tableFromColumns([{ name: "x", kind: "float64", values: Float64Array.from({ length: n }, (_, i) => i) }]);
}

describe("flagRows", () => {
  it("adds valid and invalid_reason to a table without them and flags the given rows", () => {
    const t = flagRows(plain(3), Uint8Array.from([0, 1, 0]), [undefined, "line 3: column dec: \"+95\" is outside [-90, 90]", undefined]);
    expect(t.schema.fields.map((f) => f.name)).toEqual(["x", "valid", "invalid_reason"]);
    expect(Array.from(validMask(t))).toEqual([1, 0, 1]);
    expect(stringColumn(t, "invalid_reason")).toEqual(["", "line 3: column dec: \"+95\" is outside [-90, 90]", ""]);
    expect(t.numRows).toBe(3);
    expect(countInvalid(t)).toBe(1);
  });

  it("appends a second reason with '; ' and keeps the row invalid", () => {
    let t = flagRows(plain(2), Uint8Array.from([1, 0]), ["first"]);
    t = flagRows(t, Uint8Array.from([1, 1]), ["second", "other"]);
    expect(invalidReasons(t)).toEqual(["first; second", "other"]);
    expect(Array.from(invalidRows(t))).toEqual([0, 1]);
  });

  it("uses 'flagged' when no reason is given", () => {
    expect(invalidReasons(flagRows(plain(1), Uint8Array.from([1]), []))).toEqual(["flagged"]);
  });

  it("leaves the input table unchanged", () => {
    const t = withValidity(plain(2));
    flagRows(t, Uint8Array.from([1, 1]), ["a", "b"]);
    expect(countInvalid(t)).toBe(0);
  });

  it("keeps the columns in place when flagging a table that has them", () => {
    const t = flagRows(withValidity(plain(2)), Uint8Array.from([0, 1]), [undefined, "r"]);
    expect(t.schema.fields.map((f) => f.name)).toEqual(["x", "valid", "invalid_reason"]);
  });

  it("handles empty tables and rejects a mask of the wrong length", () => {
    expect(countInvalid(flagRows(plain(0), new Uint8Array(0), []))).toBe(0);
    expect(() => flagRows(plain(2), new Uint8Array(3), [])).toThrow(/mask has 3 entries/);
  });

  it("counts a table without a valid column as all valid", () => {
    expect(countInvalid(plain(4))).toBe(0);
    expect(Array.from(validMask(plain(2)))).toEqual([1, 1]);
  });
});

describe("validMask and countInvalid on the packed bits", () => {
  it("agree with the row-by-row values for slices at every bit offset, several chunks and all-valid runs", () => {
    const n = 1000;
    const bad = new Uint8Array(n);
    for (let i = 0; i < n; i++) bad[i] = i % 97 === 5 || (i >= 600 && i < 603) ? 1 : 0;
    const t = flagRows(plain(n), bad, []);
    for (let from = 0; from < 10; from++) {
      for (const part of [t.slice(from, n - from), t.slice(from, 300).concat(t.slice(300 + from, n))]) {
        const v = part.getChild("valid")!;
        const want: number[] = [];
        for (let i = 0; i < part.numRows; i++) want.push(v.get(i) ? 1 : 0);
        expect(Array.from(validMask(part))).toEqual(want);
        expect(countInvalid(part)).toBe(want.filter((x) => x === 0).length);
      }
    }
  });

  it("count 0 for an all-valid table whose length is not a multiple of 8, and every row of an all-invalid one", () => {
    expect(countInvalid(withValidity(plain(13)))).toBe(0);
    expect(Array.from(validMask(withValidity(plain(13))))).toEqual(new Array(13).fill(1));
    expect(countInvalid(flagRows(plain(13), new Uint8Array(13).fill(1), []))).toBe(13);
  });
});
