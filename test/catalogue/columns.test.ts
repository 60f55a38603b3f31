import { describe, expect, it } from "vitest";
import { columnDataOf, float64Column, stringColumn, tableFromColumns, valuesView } from "../../src/catalogue/columns.js";

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
