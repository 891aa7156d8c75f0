import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { canonicalDecimal } from "../../src/core/decimal-text.js";
import { D } from "../../src/core/exact.js";

const exact = (t: string) => new D(t).toString();

describe("canonicalDecimal (the scenario loader's fast path for a cell's exact text)", () => {
  // reference library: decimal.js (the exact path the loader used for every cell before)
  it("writes plain decimals itself and sends every other form to decimal.js", () => {
    const calls: string[] = [];
    const spy = (t: string) => {
      calls.push(t);
      return exact(t);
    };
    // plain decimals: decimal.js's writing rules applied to the text (no sign for zero, no leading or trailing zeros)
    const plain: [string, string][] = [
      ["1", "1"],
      ["-179.99", "-179.99"],
      ["0", "0"],
      ["-0", "0"],
      ["-0.000", "0"],
      ["1.50", "1.5"],
      ["1.", "1"],
      ["007", "7"],
      ["-007.0100", "-7.01"],
      ["0.000001", "0.000001"],
      ["12345678901234567890", "12345678901234567890"],
    ];
    for (const [t, want] of plain) {
      expect(canonicalDecimal(t, spy)).toBe(want);
      expect(exact(t)).toBe(want);
    }
    expect(calls).toEqual([]);
    // the boundary cases: each goes to decimal.js and comes back as decimal.js writes it
    const cases: [string, string][] = [
      ["+1.5", "1.5"],
      ["0.0000001", "1e-7"],
      ["-0.00000012", "-1.2e-7"],
      ["0.00000010", "1e-7"],
      ["1e3", "1000"],
      ["1E-3", "0.001"],
      ["123456789012345678901", "123456789012345678901"],
      ["1234567890123456789012", "1.234567890123456789012e+21"],
      [".5", "0.5"],
    ];
    for (const [t, want] of cases) {
      calls.length = 0;
      expect(canonicalDecimal(t, spy)).toBe(want);
      expect(calls).toEqual([t]);
    }
  });

  // derived: the fast path must give decimal.js's answer for every numeric text the CSV reader accepts
  it("equals new D(text).toString() on random numeric texts", () => {
    const digits = (min: number, max: number) => fc.string({ unit: fc.constantFrom(..."0123456789"), minLength: min, maxLength: max });
    const text = fc
      .tuple(fc.constantFrom("", "-", "+"), digits(0, 24), fc.option(digits(0, 12)), fc.option(fc.tuple(fc.constantFrom("e", "E"), fc.constantFrom("", "-", "+"), digits(1, 2))))
      .map(([s, i, f, e]) => `${s}${i}${f === null ? "" : "." + f}${e === null ? "" : e.join("")}`)
      .filter((t) => /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/.test(t));
    fc.assert(fc.property(text, (t) => canonicalDecimal(t, exact) === exact(t)), { numRuns: 5000 });
    // and on the texts a calibration file typically holds (toFixed of random values)
    fc.assert(fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.integer({ min: 0, max: 12 }), (x, n) => {
      const t = x.toFixed(n);
      return canonicalDecimal(t, exact) === exact(t);
    }), { numRuns: 5000 });
  });
});
