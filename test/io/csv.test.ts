import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { readCsv } from "../../src/io/csv.js";
import type { Problem } from "../../src/core/errors.js";
import type { InputFile } from "../../src/io/files.js";
import { wrap180, wrap360 } from "../../src/core/units.js";

function input(text: string): InputFile {
  return { name: "fuzz.csv", path: "fuzz.csv", bytes: Buffer.from(text), sha256: "", text };
}

describe("CSV parsing of arbitrary input never crashes (property, fast-check)", () => {
  it("any string gives a table or located problems, never an exception", () => {
    fc.assert(
      fc.property(fc.string({ unit: "binary", maxLength: 300 }), (text) => {
        const problems: Problem[] = [];
        const t = readCsv(input(text), { required: [["element", "phase_offset_deg", "gain_offset_db"]], optional: [] }, problems);
        if (!t) expect(problems.length).toBeGreaterThan(0);
        for (const p of problems) expect(p.file).toBe("fuzz.csv");
      }),
      { numRuns: 2000 },
    );
  });

  it("CSV-shaped noise (commas, quotes, newlines, #) is handled the same way", () => {
    const alphabet = fc.constantFrom(",", '"', "\n", "\r", "#", "1", "-", ".", "e", "element", "phase_offset_deg", "gain_offset_db", " ", "\t");
    fc.assert(
      fc.property(fc.array(alphabet, { maxLength: 80 }), (parts) => {
        const problems: Problem[] = [];
        readCsv(input(parts.join("")), { required: [["element", "phase_offset_deg", "gain_offset_db"]], optional: [] }, problems);
      }),
      { numRuns: 2000 },
    );
  });

  it("comment lines before the header are kept and line numbers count them", () => {
    const problems: Problem[] = [];
    const t = readCsv(input("# measured 2026-11-20 (invented)\n# range A\nelement,phase_offset_deg,gain_offset_db\n0,1,2\n1,x,3\n"), { required: [["element", "phase_offset_deg", "gain_offset_db"]], optional: [] }, problems);
    expect(t!.comments).toEqual(["measured 2026-11-20 (invented)", "range A"]);
    expect(t!.rows.map((r) => r.line)).toEqual([4, 5]);
  });
});

describe("phase wrap invariants (property, fast-check)", () => {
  it("wrap360 lands in [0, 360) and differs from its input by a multiple of 360", () => {
    fc.assert(
      fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), (x) => {
        const w = wrap360(x);
        expect(w).toBeGreaterThanOrEqual(0);
        expect(w).toBeLessThan(360);
        const k = (x - w) / 360;
        expect(Math.abs(k - Math.round(k))).toBeLessThan(1e-9 * Math.max(1, Math.abs(k)));
        const h = wrap180(x);
        expect(h).toBeGreaterThan(-180);
        expect(h).toBeLessThanOrEqual(180);
      }),
    );
  });
});
