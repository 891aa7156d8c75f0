import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { fastFixed, fixed, hexWord } from "../../src/io/format.js";

describe("number formatting", () => {
  it("fastFixed agrees with toFixed to within one unit in the last place, and never writes -0 (property)", () => {
    fc.assert(
      fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.integer({ min: 0, max: 6 }), (x, d) => {
        const a = fastFixed(x, d);
        const b = fixed(x, d);
        expect(Math.abs(Number(a) - Number(b))).toBeLessThanOrEqual(10 ** -d * 1.000001);
        expect(a.split(".")[1]?.length ?? 0).toBe(d);
        expect(a.startsWith("-0") && Number(a) === 0).toBe(false);
      }),
      { numRuns: 5000 },
    );
    expect(fastFixed(-1e-9, 6)).toBe("0.000000");
    expect(fastFixed(359.9999996, 6)).toBe("360.000000");
    expect(fastFixed(12.5, 0)).toBe("13");
  });

  it("hex words are zero-padded upper case", () => {
    expect(hexWord(0x3f, 4)).toBe("003F");
    expect(hexWord(0xabcdef, 6)).toBe("ABCDEF");
    expect(hexWord(0xffffffff, 8)).toBe("FFFFFFFF");
  });
});

describe("AsciiBuffer", () => {
  it("writes the same text as String(n) and fastFixed (property)", async () => {
    const { AsciiBuffer, fastFixed } = await import("../../src/io/format.js");
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 2 ** 32 }), fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.integer({ min: 0, max: 7 }), (n, x, d) => {
        const b = new AsciiBuffer(4);
        b.ensure(64);
        b.uint(n);
        b.byte(44);
        b.fixed(x, d);
        expect(b.take().toString("latin1")).toBe(`${n},${fastFixed(x, d)}`);
      }),
      { numRuns: 5000 },
    );
  });
});
