/**
 * Theory that fits the quantizer and the part (issue 8 items 3 and 4).
 * The stochastic-rounding variance and loss are derived (src/core/theory.ts) and checked
 * here by simulation; the attenuator terms are derived from the codes and checked against
 * the analysis of the realized weights.
 */
import { describe, expect, it } from "vitest";
import { M, METRICS } from "../../src/core/pattern/analyze.js";
import { analyseRange } from "../../src/core/pattern/run.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import type { Plan } from "../../src/core/plan.js";
import { negativeGainLossNote, phaseQuantGainLossDb, quantizationLobeDb, STOCHASTIC_RMS_LSB, stochasticGainLossDb, theoryFor } from "../../src/core/theory.js";
import { baseScenario, load } from "../helpers.js";

function analyseAll(plan: Plan): Float64Array {
  const out = new Float64Array(plan.beams.count * plan.frequenciesHz.length * METRICS);
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    const base = fi * plan.beams.count * METRICS;
    analyseRange(plan, fi, 0, plan.beams.count, out.subarray(base, base + plan.beams.count * METRICS), { c: null });
  }
  return out;
}
const column = (m: Float64Array, k: number) => Array.from({ length: m.length / METRICS }, (_, i) => m[i * METRICS + k]!);
const median = (a: number[]) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)]!;
const rmsOf = (a: number[]) => Math.sqrt(a.reduce((s, x) => s + x * x, 0) / a.length);

describe("stochastic rounding (derived; checked by simulation)", () => {
  it("rms error LSB/√6 and mean phasor [sin(π/2^B)/(π/2^B)]², i.e. |E[e^{jε}]|² = sinc⁴ (twice nearest rounding's loss in dB)", () => {
    // derived: E[e²|f] = f(1−f), ∫₀¹ f(1−f) df = 1/6; E[e^{jε}] = 2(1 − cos Δ)/Δ² = [sin(Δ/2)/(Δ/2)]²
    const r = mulberry32(8);
    const n = 400_000;
    for (const B of [2, 3, 5]) {
      const lsb = (2 * Math.PI) / 2 ** B;
      let s2 = 0, re = 0, im = 0;
      for (let i = 0; i < n; i++) {
        const t = r() * 2 ** B; // a phase in LSB units, fraction uniform (spread calibration phases)
        const fl = Math.floor(t);
        const e = (fl + (r() < t - fl ? 1 : 0) - t) * lsb;
        s2 += e * e;
        re += Math.cos(e);
        im += Math.sin(e);
      }
      const rms = Math.sqrt(s2 / n) / lsb;
      // sampling error of E[e²] over 4e5 draws is ~0.2 %: 1 % is safe and far from LSB/√12 (29 % lower)
      expect(Math.abs(rms / STOCHASTIC_RMS_LSB - 1)).toBeLessThan(0.01);
      const gainDb = -10 * Math.log10((re / n) ** 2 + (im / n) ** 2);
      expect(Math.abs(gainDb - stochasticGainLossDb(B))).toBeLessThan(0.01 * stochasticGainLossDb(B) + 0.002);
      expect(stochasticGainLossDb(B)).toBeCloseTo(2 * phaseQuantGainLossDb(B), 12);
    }
  });

  it("the randomized quantizer on a calibrated array: measured rms phase error and gain loss land on the stochastic theory, not the nearest one", () => {
    const r = mulberry32(31);
    const n = 16 * 16;
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(r() * 360).toFixed(4)},0`).join("\n") + "\n";
    const L = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 16, rows: 16, dx: "0.5 lambda", dy: "0.5 lambda" } }, calibration: "cal.csv", phaseShifter: { bits: 3 }, quantizer: { method: "randomized", seed: 5 }, beams: { kind: "azel", az: { from: -40, to: 40, step: 10 }, el: { from: -20, to: 20, step: 20 } } }), { "cal.csv": cal });
    const t = theoryFor(L.plan);
    expect(t.rmsPhaseErrorDeg.formula).toBe("LSB/√6");
    expect(t.rmsPhaseErrorDeg.value).toBeCloseTo(45 / Math.sqrt(6), 12);
    expect(t.quantizationLobeDb.value).toBeNull();
    expect(t.quantizationLobeDb.note).toMatch(/randomized rounding leaves no periodic error/);
    const m = analyseAll(L.plan);
    expect(Math.abs(rmsOf(column(m, M.rms_phase_error_deg)) / t.rmsPhaseErrorDeg.value! - 1)).toBeLessThan(0.03);
    expect(Math.abs(median(column(m, M.gain_loss_db)) - t.expectedGainLossDb.value!)).toBeLessThan(0.08);
    // and clearly not nearest rounding's estimates (LSB/√12 is 29 % lower; sinc² loss half)
    expect(rmsOf(column(m, M.rms_phase_error_deg)) / (45 / Math.sqrt(12))).toBeGreaterThan(1.3);
  });
});

describe("quantisation lobe", () => {
  it("is exactly 10·log10(2^(−2B)) = −6.0206·B dB (Mailloux ch. 7, from memory; the constant is 20·log10 2)", () => {
    for (let B = 1; B <= 12; B++) {
      expect(quantizationLobeDb(B)).toBeCloseTo(10 * Math.log10(2 ** (-2 * B)), 10);
      expect(quantizationLobeDb(B)).toBeCloseTo(-6.0206 * B, 3);
    }
    expect(Math.abs(quantizationLobeDb(8) - -6.02 * 8)).toBeGreaterThan(0.004); // the old −6.02·B was 0.0006·B dB off
  });
});

describe("the attenuator's part: rounding, clipping, no attenuator, measured states", () => {
  const taylor = { kind: "taylor", sidelobe: "-30 dB", nbar: 4 };
  const grid = { kind: "azel", az: { from: -30, to: 30, step: 15 }, el: { from: 0, to: 0, step: 1 } };
  const lattice = { kind: "rectangular", columns: 12, rows: 12, dx: "0.5 lambda", dy: "0.5 lambda" };

  it("clipping: negative gain loss and the rms amplitude error are predicted from the codes (derived), and said why", () => {
    const L = load(baseScenario({ array: { lattice }, taper: taylor, attenuator: { bits: 3, step: "0.5 dB" }, phaseShifter: { bits: 6 }, beams: grid }));
    const t = theoryFor(L.plan);
    const m = analyseAll(L.plan);
    expect(t.clippedElements).toBeGreaterThan(0);
    // derived: the realized amplitudes are beam-independent for ideal parts, so the rms amplitude error is known exactly:
    // each rounded element's actual rounding error, each clipped one's excess over the range
    for (const v of column(m, M.rms_amp_error_db)) expect(v).toBeCloseTo(t.rmsAmpErrorDb.value!, 9);
    expect(t.rmsAmpErrorDb.formula).toMatch(/Σ_clipped/);
    const gl = column(m, M.gain_loss_db);
    expect(median(gl)).toBeLessThan(0);
    expect(t.attenGainChangeDb.value!).toBeLessThan(0);
    expect(Math.abs(median(gl) - t.expectedGainLossDb.value!)).toBeLessThan(0.05);
    const note = negativeGainLossNote(t, gl.filter((x) => x < 0).length, gl.length)!;
    expect(note).toMatch(/referred to the tapered ideal/);
    expect(note).toMatch(new RegExp(`${t.clippedElements} element\\(s\\) are clipped`));
    expect(note).toMatch(/dB rms into the amplitude error/);
  });

  it("rounding without clipping: the rms of each element's actual rounding, not step/√12 over every element (Taylor taper, 3 dB step)", () => {
    // independent source: test/cli/sweep-theory-scipy.test.ts recomputes the same value in numpy from scipy's Taylor
    // window; here the check is against the analysis of the realized weights, beam by beam
    const L = load(baseScenario({ array: { lattice }, taper: taylor, attenuator: { bits: 8, step: "3 dB" }, phaseShifter: { bits: 6 }, beams: grid }));
    const t = theoryFor(L.plan);
    expect(t.clippedElements).toBe(0);
    const m = analyseAll(L.plan);
    for (const v of column(m, M.rms_amp_error_db)) expect(v).toBeCloseTo(t.rmsAmpErrorDb.value!, 9);
    // common practice's step/√12 = 0.866 dB assumes every element rounds with an error uniform over the step; the element
    // at the taper's peak sits on a step (A = 0) and the taper's few distinct values do not fill the step
    expect(Math.abs(t.rmsAmpErrorDb.value! - 3 / Math.sqrt(12))).toBeGreaterThan(0.05);
    expect(t.rmsAmpErrorDb.note).toMatch(/step\/√12 = 0\.866 dB/);
  });

  it("no attenuator (bits 0): the amplitude error is all unapplied attenuation, not step/√12", () => {
    const L = load(baseScenario({ array: { lattice }, taper: taylor, attenuator: { bits: 0, step: "0.5 dB" }, phaseShifter: { bits: 6 }, beams: grid }));
    const t = theoryFor(L.plan);
    expect(t.rmsAmpErrorDb.formula).not.toMatch(/√12/);
    expect(t.rmsAmpErrorDb.note).toMatch(/step\/√12 does not apply/);
    const m = analyseAll(L.plan);
    // derived: exact (no rounding at all), the same number the analysis measures on every beam
    for (const v of column(m, M.rms_amp_error_db)) expect(v).toBeCloseTo(t.rmsAmpErrorDb.value!, 9);
    expect(t.rmsAmpErrorDb.value!).toBeGreaterThan(1);
  });

  it("whole-step attenuations (uniform taper, no gain calibration) have no rounding error: 0, not step/√12", () => {
    const L = load(baseScenario());
    const t = theoryFor(L.plan);
    expect(t.rmsAmpErrorDb.value).toBe(0);
    const m = analyseAll(L.plan);
    for (const v of column(m, M.rms_amp_error_db)) expect(v).toBe(0);
  });

  it("the optimized quantizer moves codes per beam: every rounding and attenuator estimate is n/a, with the reason", () => {
    const L = load(baseScenario({ taper: taylor, quantizer: { method: "optimized", objective: "psl", seed: 1 } }));
    const t = theoryFor(L.plan);
    for (const v of [t.gainLossDb, t.rmsPhaseErrorDeg, t.quantizationLobeDb, t.rmsAmpErrorDb, t.attenGainChangeDb, t.expectedGainLossDb]) {
      expect(v.value).toBeNull();
      expect(v.note).toMatch(/optimized quantizer/);
    }
  });

  it("measured state tables: the rounding estimates are n/a, with the reason", () => {
    const ps = "code,phase_deg,gain_db\n" + Array.from({ length: 8 }, (_, p) => `${p},${p * 45 + (p % 3) - 1},0`).join("\n") + "\n";
    const L = load(baseScenario({ phaseShifter: { bits: 3, states: "ps.csv" } }), { "ps.csv": ps });
    const t = theoryFor(L.plan);
    for (const v of [t.gainLossDb, t.rmsPhaseErrorDeg, t.quantizationLobeDb, t.randomSidelobeFloorDb, t.expectedGainLossDb]) {
      expect(v.value).toBeNull();
      expect(v.note).toMatch(/measured state tables/);
    }
  });
});
