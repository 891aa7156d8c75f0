import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { checkLayout, packPlan, packWord, unpackWord, type WordLayout } from "../../src/core/words.js";

describe("word packing", () => {
  it("round-trips codes → word → codes for random layouts (property, fast-check)", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 12 }), fc.integer({ min: 0, max: 10 }), fc.integer({ min: 0, max: 6 }), fc.integer({ min: 0, max: 4095 }), fc.integer({ min: 0, max: 1023 }), (pb, ab, gap, p, q) => {
        const layout: WordLayout = { bits: 32, bytes: 4, off: 0, fields: [{ name: "phase", shift: 0, width: pb }, { name: "atten", shift: pb + gap, width: Math.max(1, ab) }, { name: "enable", shift: 31, width: 1, value: 1 }] };
        expect(checkLayout(layout, pb, Math.max(1, ab), "/word")).toEqual([]);
        const pp = packPlan(layout);
        const pc = p % 2 ** pb;
        const qc = q % 2 ** Math.max(1, ab);
        const w = packWord(pp, pc, qc);
        expect(w).toBeGreaterThanOrEqual(2 ** 31);
        const u = unpackWord(pp, layout, w);
        expect([u.phaseCode, u.attenCode, u.constantsOk]).toEqual([pc, qc, true]);
      }),
    );
  });

  it("rejects overlaps, fields past the word, fields narrower than the codes, and a wide off word", () => {
    const bad: WordLayout = { bits: 12, bytes: 2, off: 5000, fields: [{ name: "phase", shift: 0, width: 5 }, { name: "atten", shift: 4, width: 6 }, { name: "strobe", shift: 10, width: 4, value: 1 }] };
    const msgs = checkLayout(bad, 6, 6, "/word").map((p) => `${p.pointer}: ${p.message}`);
    expect(msgs.join("\n")).toMatch(/\/word\/off: expected an off word that fits in 12 bits/);
    expect(msgs.join("\n")).toMatch(/\/word\/fields\/0\/width: field "phase" is 5 bits wide/);
    expect(msgs.join("\n")).toMatch(/\/word\/fields\/1: field "atten" overlaps field "phase"/);
    expect(msgs.join("\n")).toMatch(/\/word\/fields\/2: field "strobe" \(bits 10…13\) runs past the 12-bit word/);
  });

  // a 6-bit attenuator with no "atten" field: every word commanded 0 dB while beams.csv analysed the taper as applied
  it("requires an atten field when the attenuator has bits, and none when it has none", () => {
    const phaseOnly: WordLayout = { bits: 8, bytes: 1, off: 0, fields: [{ name: "phase", shift: 0, width: 6 }] };
    expect(checkLayout(phaseOnly, 6, 0, "/word")).toEqual([]);
    const msgs = checkLayout(phaseOnly, 6, 6, "/word").map((p) => `${p.pointer}: ${p.message}`);
    expect(msgs).toHaveLength(1);
    expect(msgs[0]).toMatch(/^\/word\/fields: expected a field named "atten" \(at least 6 bits wide\) for the attenuator's 6-bit codes/);
  });
});
