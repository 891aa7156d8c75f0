import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { allocBeamCodes, makeQuantizer, prepareFrequency } from "../../src/core/quantize/index.js";
import { nearestQuantizer } from "../../src/core/quantize/nearest.js";
import { randomizedQuantizer } from "../../src/core/quantize/randomized.js";
import { exactPhaseT } from "../../src/core/quantize/prepare.js";
import { runTables } from "../../src/core/engine.js";
import { exactBeamDirection } from "../../src/core/beams.js";
import { SPEED_OF_LIGHT, wrap360 } from "../../src/core/units.js";
import type { Plan } from "../../src/core/plan.js";
import { baseScenario, load } from "../helpers.js";

function codesOf(plan: Plan, b: number, fi = 0) {
  const q = makeQuantizer(plan, fi);
  const c = allocBeamCodes(plan.elements.count);
  q.beam(b, c);
  return c;
}

describe("steering phase", () => {
  it("line array: Δφ between neighbours = 2π·d·sinθ/λ (common practice; Balanis ch. 6)", () => {
    const L = load(baseScenario({
      frequency: "12 GHz",
      array: { lattice: { kind: "rectangular", columns: 10, rows: 1, dx: "11 mm", dy: "11 mm" } },
      beams: { kind: "azel", az: { from: -40, to: 40, step: 20 }, el: { from: 0, to: 0, step: 1 } },
      phaseShifter: { bits: 12 },
      word: { bits: 32, fields: [{ name: "phase", shift: 0, width: 12 }, { name: "atten", shift: 16, width: 8 }] },
    }));
    const plan = L.plan;
    const lambda = SPEED_OF_LIGHT / 12e9;
    for (let b = 0; b < plan.beams.count; b++) {
      const c = codesOf(plan, b);
      const theta = (plan.beams.azDeg[b]! * Math.PI) / 180;
      const expected = wrap360(-(360 * 0.011 * Math.sin(theta)) / lambda); // φ_{n+1} − φ_n (deg), sign per the contract
      for (let n = 0; n + 1 < 10; n++) {
        const d = wrap360(c.phaseDeg[n + 1]! - c.phaseDeg[n]!);
        expect(Math.min(Math.abs(d - expected), 360 - Math.abs(d - expected))).toBeLessThan(1e-9);
      }
    }
  });
});

describe("nearest rounding (interface contract: ties to the higher code, boundaries decided exactly)", () => {
  it("λ/2 line at u = 0.25 with 3 bits puts every element on a boundary; all go up", () => {
    // common practice worked case: φ_m = −180°·(m − 3.5)·0.25 = odd multiples of 22.5° = half an LSB (45°)
    const L = load(baseScenario({ beams: { kind: "uv", u: { from: 0.25, to: 0.25, step: 1 }, v: { from: 0, to: 0, step: 1 } } }));
    const c = codesOf(L.plan, 0);
    for (let m = 0; m < 8; m++) {
      const phi = -180 * (m - 3.5) * 0.25; // exact, degrees
      const t = wrap360(phi) / 45; // exactly k + 1/2
      expect(t - Math.floor(t)).toBeCloseTo(0.5, 12);
      expect(c.phaseCode[m]).toBe((Math.floor(t) + 1) % 8);
    }
  });

  it("az = 30° ties (sin 30° = 1/2) are recognised through the exact decimal path", () => {
    // az/el grid: u = cos(0)·sin(30°) = 1/2 exactly; λ/2 pitch, 8 elements, 2 bits (LSB 90°):
    // φ_m = −180°·(m − 3.5)·0.5 = −90°·(m − 3.5): every value is a half-integer number of LSBs.
    const L = load(baseScenario({ phaseShifter: { bits: 2 }, beams: { kind: "azel", az: { from: 30, to: 30, step: 1 }, el: { from: 0, to: 0, step: 1 } } }));
    const c = codesOf(L.plan, 0);
    for (let m = 0; m < 8; m++) {
      const t = wrap360(-90 * (m - 3.5)) / 90;
      expect(c.phaseCode[m]).toBe((Math.floor(t) + 1) % 4);
    }
  });

  it("every code is within half an LSB of its exact value (property, fast-check)", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 8 }),
        fc.double({ min: -0.99, max: 0.99, noNaN: true }),
        fc.array(fc.double({ min: -720, max: 720, noNaN: true }), { minLength: 6, maxLength: 6 }),
        (bits, u, cal) => {
          const csv = "element,phase_offset_deg,gain_offset_db\n" + cal.map((c, i) => `${i},${c.toFixed(6)},0`).join("\n") + "\n";
          const L = load(baseScenario({
            array: { lattice: { kind: "rectangular", columns: 6, rows: 1, dx: "13 mm", dy: "13 mm" } },
            phaseShifter: { bits },
            beams: { kind: "uv", u: { from: Number(u.toFixed(9)), to: Number(u.toFixed(9)), step: 1 }, v: { from: 0, to: 0, step: 1 } },
            calibration: "cal.csv",
          }), { "cal.csv": csv });
          const c = codesOf(L.plan, 0);
          const lsb = 360 / 2 ** bits;
          for (let i = 0; i < 6; i++) {
            const t = exactPhaseT(L.plan, 0, i, exactBeamDirection(L.plan.beams.spec, 0)).toNumber();
            const err = Math.abs(wrap360((c.phaseCode[i]! - t) * lsb + 180) - 180) / lsb;
            expect(err).toBeLessThanOrEqual(0.5 + 1e-9);
          }
        },
      ),
      { numRuns: 60 },
    );
  });

  it("recovers an injected calibration offset: codes shift by −c/LSB", () => {
    // shared quantizer contract: with c_n = k_n·LSB exactly, codes move by −k_n (mod 2^B)
    const k = [0, 1, 5, 7, 2, 3, 6, 4];
    const csv = "element,phase_offset_deg,gain_offset_db\n" + k.map((v, i) => `${i},${v * 45},0`).join("\n") + "\n";
    const a = load(baseScenario());
    const b = load(baseScenario({ calibration: "cal.csv" }), { "cal.csv": csv });
    for (let beam = 0; beam < a.plan.beams.count; beam++) {
      const ca = codesOf(a.plan, beam);
      const cb = codesOf(b.plan, beam);
      for (let i = 0; i < 8; i++) expect(cb.phaseCode[i]).toBe((((ca.phaseCode[i]! - k[i]!) % 8) + 8) % 8);
    }
  });
});

describe("commanded attenuation and G_ref (interface contract)", () => {
  it("one element runs at 0 dB, every A_n ≥ 0, codes round A/step with clipping counted", () => {
    const gains = [0.3, -1.2, 0.0, 2.5, -0.4, 0.9, 1.1, -2.0];
    const csv = "element,phase_offset_deg,gain_offset_db\n" + gains.map((g, i) => `${i},0,${g}`).join("\n") + "\n";
    const L = load(baseScenario({ calibration: "cal.csv", attenuator: { bits: 2, step: "1 dB" } }), { "cal.csv": csv });
    const prep = prepareFrequency(L.plan, 0);
    expect(prep.gRefDb).toBe(-2.0);
    for (let i = 0; i < 8; i++) {
      expect(prep.attenDb[i]).toBeCloseTo(gains[i]! + 2.0, 12);
      const q = Math.min(3, Math.floor(gains[i]! + 2.0 + 0.5));
      expect(prep.attenCode[i]).toBe(q);
    }
    expect(prep.clipped).toBe(gains.filter((g) => g + 2 > 3.5).length); // 2.5 + 2 = 4.5 dB > 3 dB range
    // ties go up: 0.3 + 2.0 = 2.3 → 2; −1.2 + 2 = 0.8 → 1; 0.5-boundaries decided exactly
  });

  it("an exact 0.5-step tie goes to the higher code", () => {
    const csv = "element,phase_offset_deg,gain_offset_db\n0,0,0\n1,0,0.25\n" + Array.from({ length: 6 }, (_, i) => `${i + 2},0,0`).join("\n") + "\n";
    const L = load(baseScenario({ calibration: "cal.csv", attenuator: { bits: 4, step: "0.5 dB" } }), { "cal.csv": csv });
    expect(prepareFrequency(L.plan, 0).attenCode[1]).toBe(1); // 0.25/0.5 = 0.5 exactly → up
  });
});

describe("randomized quantizer (Smith & Guo, IEEE Trans. AP-31, 1983)", () => {
  it("rounds each phase down or up only, reproducibly for a seed, and differently for another seed", () => {
    const doc = baseScenario({ phaseShifter: { bits: 3 }, quantizer: { method: "randomized", seed: 7 }, beams: { kind: "uv", u: { from: -0.9, to: 0.9, step: 0.01 }, v: { from: 0, to: 0, step: 1 } } });
    const L = load(doc);
    const L2 = load({ ...doc, quantizer: { method: "randomized", seed: 8 } });
    const prep = prepareFrequency(L.plan, 0);
    const q1 = randomizedQuantizer(L.plan, 0);
    const q1b = randomizedQuantizer(L.plan, 0);
    const q2 = randomizedQuantizer(L2.plan, 0);
    const a = allocBeamCodes(8), b = allocBeamCodes(8), c = allocBeamCodes(8);
    let differ = 0;
    let up = 0, total = 0, expectUp = 0;
    for (let beam = 0; beam < L.plan.beams.count; beam++) {
      q1.beam(beam, a); q1b.beam(beam, b); q2.beam(beam, c);
      for (let i = 0; i < 8; i++) {
        const t = prep.X[i]! * L.plan.beams.u[beam]! + prep.C[i]!;
        const lo = ((Math.floor(t) % 8) + 8) % 8;
        expect([lo, (lo + 1) % 8]).toContain(a.phaseCode[i]);
        expect(b.phaseCode[i]).toBe(a.phaseCode[i]);
        if (c.phaseCode[i] !== a.phaseCode[i]) differ++;
        if (a.phaseCode[i] !== lo) up++;
        expectUp += t - Math.floor(t);
        total++;
      }
    }
    expect(differ).toBeGreaterThan(0);
    // P(up) = frac(t): the count of round-ups matches its expectation within 4σ (binomial)
    expect(Math.abs(up - expectUp)).toBeLessThan(4 * Math.sqrt(total / 4));
  });

  it("the random stream is keyed by the frequency's value, not its place in the list (issue 8 item 6; README: depends on (seed, frequency, beam))", () => {
    // derived: the same (seed, frequency, beam) must give the same words wherever the frequency is listed
    const doc = (frequency: unknown) => baseScenario({ frequency, array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5.2 mm", dy: "5.2 mm" } }, phaseShifter: { bits: 4 }, calibration: "cal.csv", quantizer: { method: "randomized", seed: 11 }, beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.1 }, v: { from: 0, to: 0, step: 1 } } });
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 8 }, (_, i) => `${i},${(i * 47.3) % 360},0`).join("\n") + "\n";
    const words = (plan: Plan, fi: number) => {
      const out: number[] = [];
      runTables(plan, (f, _b, w) => {
        if (f === fi) out.push(...Array.from(w));
      });
      return out;
    };
    const alone = words(load(doc("29 GHz"), { "cal.csv": cal }).plan, 0);
    const beside = words(load(doc(["27 GHz", "29 GHz"]), { "cal.csv": cal }).plan, 1);
    const otherSpelling = words(load(doc(["29000 MHz", "27 GHz"]), { "cal.csv": cal }).plan, 0);
    const at27 = words(load(doc("27 GHz"), { "cal.csv": cal }).plan, 0);
    expect(alone.length).toBe(13 * 8);
    expect(beside).toEqual(alone);
    expect(otherSpelling).toEqual(alone);
    // and 27 GHz keeps its own stream when 29 GHz is listed after it
    const at27codes = words(load(doc(["27 GHz", "29 GHz"]), { "cal.csv": cal }).plan, 0);
    expect(at27codes).toEqual(at27);
  });

  it("nearest and randomized share the commanded phase", () => {
    const L = load(baseScenario({ quantizer: { method: "randomized", seed: 3 } }));
    const a = allocBeamCodes(8), b = allocBeamCodes(8);
    nearestQuantizer(L.plan, 0).beam(1, a);
    randomizedQuantizer(L.plan, 0).beam(1, b);
    expect(Array.from(b.phaseDeg)).toEqual(Array.from(a.phaseDeg));
  });
});
