/** Quantities (issue 8 item 5): a string is read only with its unit; units are case-sensitive. */
import { describe, expect, it } from "vitest";
import { parseQuantity } from "../../src/core/units.js";

const ok = (raw: unknown, kind: "frequency" | "length" | "level") => {
  const r = parseQuantity(raw, kind);
  if (!r.ok) throw new Error(r.expected);
  return r.q;
};
const why = (raw: unknown, kind: "frequency" | "length" | "level") => {
  const r = parseQuantity(raw, kind);
  return r.ok ? null : r.expected;
};

describe("parseQuantity", () => {
  it("plain JSON numbers are SI; strings carry their unit (interface contract: quantities)", () => {
    expect(ok(28e9, "frequency").value).toBe(28e9);
    expect(ok(0.0052, "length").value).toBe(0.0052);
    expect(ok(-30, "level").value).toBe(-30);
    // common practice: SI prefixes k = 1e3, M = 1e6, G = 1e9, T = 1e12; c = 1e-2, m = 1e-3, µ = 1e-6; 1 in = 25.4 mm, 1 mil = 0.0254 mm
    expect(ok("28 GHz", "frequency").exact.toString()).toBe("28000000000");
    expect(ok("27500 MHz", "frequency").value).toBe(27.5e9);
    expect(ok("5.2 mm", "length").exact.toString()).toBe("0.0052");
    expect(ok("2 um", "length").value).toBe(2e-6);
    expect(ok("2 µm", "length").value).toBe(2e-6); // micro sign U+00B5
    expect(ok("2 μm", "length").value).toBe(2e-6); // Greek mu U+03BC
    expect(ok("10 mil", "length").value).toBeCloseTo(254e-6, 15);
    expect(ok("-30 dB", "level").value).toBe(-30);
  });

  it("accepts λ as well as lambda (a multiple of the wavelength)", () => {
    for (const s of ["0.5 lambda", "0.5 λ", "0.5λ", "0.5 wavelengths"]) {
      const q = ok(s, "length");
      expect(q.inLambda).toBe(true);
      expect(q.value).toBe(0.5);
    }
  });

  it("a string without a unit is refused, saying how to write it", () => {
    expect(why("28", "frequency")).toMatch(/a string needs its unit \(e\.g\. "28 GHz"\): only a plain JSON number is read in Hz/);
    expect(why("5.2", "length")).toMatch(/a string needs its unit \(e\.g\. "5.2 mm"\): only a plain JSON number is read in metres/);
    expect(why("-30", "level")).toMatch(/a string needs its unit \(e\.g\. "-30 dB"\)/);
  });

  it("case changes meaning (mHz vs MHz, mm vs Mm): another case of a known unit is refused, never guessed", () => {
    for (const [raw, kind, right] of [
      ["28 ghz", "frequency", "GHz"],
      ["28 GHZ", "frequency", "GHz"],
      ["28000 mhz", "frequency", "MHz"],
      ["28000 mHz", "frequency", "MHz"],
      ["5 Mm", "length", "mm"],
      ["5 MM", "length", "mm"],
      ["5 CM", "length", "cm"],
      ["0.5 Lambda", "length", "lambda"],
      ["-30 db", "level", "dB"],
    ] as const) {
      expect(why(raw, kind), raw).toMatch(new RegExp(`units are case-sensitive.*write "${right}", not "${raw.split(" ")[1]}"`));
    }
    expect(why("5 parsec", "length")).toMatch(/unknown unit "parsec"/);
    expect(why("5 GHz", "length")).toMatch(/unknown unit "GHz"/);
  });
});
