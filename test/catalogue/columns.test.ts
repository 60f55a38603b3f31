import { describe, expect, it } from "vitest";
import { Float16, Float64, Table, tableFromIPC, tableToIPC, vectorFromArray } from "apache-arrow";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { boolDataExcept, columnDataOf, float64Column, sparseUtf8Data, stringColumn, tableFromColumns, valuesView } from "../../src/catalogue/columns.js";

const table = tableFromColumns([
  { name: "s", kind: "utf8", values: ["aa", "b", "", "dddd", "é"], nulls: Uint8Array.of(0, 0, 1, 0, 0) },
  { name: "x", kind: "float64", values: Float64Array.of(1, 2, 3, 4, 5) },
  { name: "k", kind: "int32", values: Int32Array.of(10, 20, 30, 40, 50) },
  { name: "f", kind: "bool", values: Uint8Array.of(1, 0, 1, 1, 0), nulls: Uint8Array.of(0, 0, 0, 1, 0) },
]);

describe("columns of a sliced table", () => {
  // Table.slice keeps the buffers and moves the offset: each reader must start at the slice's first row
  const sliced = table.slice(1, 5);

  it("stringColumn reads the slice's strings, nulls as null", () => {
    expect(stringColumn(sliced, "s")).toEqual(["b", null, "dddd", "é"]);
  });

  it("columnDataOf reads the slice's strings, numbers and booleans (a null boolean reads as false)", () => {
    expect(columnDataOf(sliced, "s").values).toEqual(["b", "", "dddd", "é"]);
    expect(Array.from(columnDataOf(sliced, "x").values as Float64Array)).toEqual([2, 3, 4, 5]);
    const f = columnDataOf(sliced, "f");
    expect(Array.from(f.values as Uint8Array)).toEqual([0, 1, 0, 0]);
    expect(Array.from(f.nulls!)).toEqual([0, 0, 1, 0]);
    expect(columnDataOf(sliced, "x").nulls).toBeUndefined();
  });

  it("valuesView gives the slice's values without a copy, and nothing for other columns", () => {
    expect(Array.from(valuesView(sliced, "x", "float64")!)).toEqual([2, 3, 4, 5]);
    expect(Array.from(valuesView(sliced, "k", "int32")!)).toEqual([20, 30, 40, 50]);
    expect(valuesView(sliced, "k", "float64")).toBeUndefined();
    expect(valuesView(sliced, "s", "float64")).toBeUndefined();
    expect(Array.from(float64Column(sliced, "k"))).toEqual([20, 30, 40, 50]);
  });
});

describe("boolDataExcept and sparseUtf8Data", () => {
  it("give the same Arrow bytes as the dense columns they stand for (empty, one row, lengths off a multiple of 8)", () => {
    for (const n of [0, 1, 7, 8, 9, 100]) {
      const rows = [0, 3, 8, n - 1].filter((r, k, a) => r >= 0 && r < n && a.indexOf(r) === k).sort((p, q) => p - q);
      const texts: string[] = [];
      for (const r of rows) texts[r] = `line ${r + 2}: column ra: "ä${r}" is not a number`;
      const valid = new Uint8Array(n).fill(1);
      const reason = new Array<string>(n).fill("");
      for (const r of rows) {
        valid[r] = 0;
        reason[r] = texts[r]!;
      }
      const dense = tableFromColumns([
        { name: "valid", kind: "bool", values: valid },
        { name: "invalid_reason", kind: "utf8", values: reason },
      ], new Map(), n);
      const sparse = tableFromColumns([
        { name: "valid", data: boolDataExcept(n, rows) },
        { name: "invalid_reason", data: sparseUtf8Data(n, rows, texts) },
      ], new Map(), n);
      expect(Buffer.from(tableToIPC(sparse)).equals(Buffer.from(tableToIPC(dense)))).toBe(true);
    }
  });
});

describe("half-precision float columns", () => {
  // 0.5, -2, 1.25, 65504 (the largest half) and 2^-14 are exact in IEEE 754 binary16 (IEEE 754-2008, table 3.5)
  const exact = [0.5, -2, 1.25, 65504, 2 ** -14];
  const table = new Table({ h: vectorFromArray(exact, new Float16()), n: vectorFromArray([1, 2, 3, 4, 5], new Float64()) });

  it("are read as their values, not as the raw 16-bit patterns", () => {
    expect(Array.from(columnDataOf(table, "h").values as Float64Array)).toEqual(exact);
    expect(Array.from(float64Column(table, "h"))).toEqual(exact);
    expect(valuesView(table, "h", "float64")).toBeUndefined();
  });

  it("keep their values through the joined table of 'peculiar match'", () => {
    buildOnce();
    const tmp = tempDir("peculiar-half-");
    try {
      const file = join(tmp.dir, "halves.arrow");
      const t = new Table({
        ra: vectorFromArray([10, 20, 30, 40, 50], new Float64()),
        dec: vectorFromArray([-5, 0, 5, 10, 15], new Float64()),
        h: vectorFromArray(exact, new Float16()),
      });
      writeFileSync(file, tableToIPC(t, "file"));
      const out = join(tmp.dir, "out.arrow");
      const r = runCli(["match", file, file, "-o", out, "--radius", "1arcsec", "-q"]);
      expect(r.code, r.stderr).toBe(0);
      const got = tableFromIPC(readFileSync(out));
      expect(Array.from(float64Column(got, "halves_a_h"))).toEqual(exact);
      expect(Array.from(float64Column(got, "halves_b_h"))).toEqual(exact);
    } finally {
      tmp.cleanup();
    }
  });
});
