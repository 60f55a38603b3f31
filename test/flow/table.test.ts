// The flow inputs read from a table (src/flow/table.ts): our own rules (DEVELOPERS.md "Flow").
import { describe, expect, it } from "vitest";
import { parseCsv } from "../../src/catalogue/io.js";
import { flagColumn } from "../../src/flow/table.js";

describe("flagColumn", () => {
  it("reads a bool, a number or a text column of true/false words, and a null as 0", () => {
    // invented rows; a CSV flag column with one odd cell is read as text, the others as bool or int
    const t = parseCsv("a,b,c\ntrue,1,yes\nfalse,0,no\n,2,TRUE\ntrue,0,f\n", { file: "f.csv" });
    expect(Array.from(flagColumn(t, "a"))).toEqual([1, 0, 0, 1]);
    expect(Array.from(flagColumn(t, "b"))).toEqual([1, 0, 1, 0]);
    expect(Array.from(flagColumn(t, "c"))).toEqual([1, 0, 1, 0]);
    expect(Array.from(flagColumn(t, "missing"))).toEqual([0, 0, 0, 0]);
  });

  it("refuses a text cell that is not a flag, naming the file, its line and the column", () => {
    const t = parseCsv("id,outlier\ng1,false\ng2,maybe\ng3,true\n", { file: "f.csv" });
    expect(() => flagColumn(t, "outlier", "f.csv")).toThrow('f.csv:3 column outlier: "maybe" is not a flag (true or false)');
  });
});
