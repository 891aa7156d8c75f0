import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { bruteForceNearest, elementStates, NearestStateSearch, type ElementStates } from "../../src/core/quantize/states.js";
import { allocBeamCodes, makeQuantizer, prepareFrequency } from "../../src/core/quantize/index.js";
import { BeamAnalyzer, METRICS, M } from "../../src/core/pattern/analyze.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { baseScenario, load } from "../helpers.js";

function randomStates(r: () => number, np: number, nq: number, phaseErrDeg: number, ripple: number): ElementStates {
  const pAng = Float64Array.from({ length: np }, (_, p) => (((p * 360) / np + (r() - 0.5) * 2 * phaseErrDeg) * Math.PI) / 180);
  const pMag = Float64Array.from({ length: np }, () => Math.pow(10, ((r() - 0.5) * ripple) / 20));
  const qDb = Float64Array.from({ length: nq }, (_, q) => q * 0.5 * (1 + (r() - 0.5) * 0.2));
  const qAng = Float64Array.from({ length: nq }, (_, q) => ((q * 0.8 + (r() - 0.5) * 3) * Math.PI) / 180);
  const qMag = Float64Array.from(qDb, (a) => Math.pow(10, -a / 20));
  return { pAng, pMag, qAng, qMag, qDb };
}

describe("measured-state selection", () => {
  it("the pruned search equals brute force over every (phase, attenuation) pair (property, fast-check)", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 6 }), fc.integer({ min: 0, max: 5 }), fc.integer({ min: 0, max: 2 ** 31 }), fc.double({ min: 0.05, max: 2, noNaN: true }), (pb, ab, seed, R) => {
        const r = mulberry32(seed);
        const s = randomStates(r, 2 ** pb, 2 ** ab, 15, 1.5);
        const search = new NearestStateSearch(s, R);
        for (let k = 0; k < 40; k++) {
          const theta = r() * 2 * Math.PI * 3 - 2 * Math.PI;
          const a = search.nearest(theta);
          const b = bruteForceNearest(s, R, theta);
          expect([a.p, a.q]).toEqual([b.p, b.q]);
        }
      }),
      { numRuns: 300 },
    );
  });

  it("a whole build with per-element measured states picks the brute-force pair for every element and beam", () => {
    const r = mulberry32(4);
    const np = 8, nq = 8, n = 8;
    let ps = "element,code,phase_deg,gain_db\n";
    let as = "element,code,atten_db,phase_deg\n";
    for (let e = 0; e < n; e++) {
      for (let p = 0; p < np; p++) ps += `${e},${p},${(p * 45 + (r() - 0.5) * 20).toFixed(3)},${((r() - 0.5) * 1.2).toFixed(3)}\n`;
      for (let q = 0; q < nq; q++) as += `${e},${q},${(q * 1.0 * (1 + (r() - 0.5) * 0.1)).toFixed(3)},${(q * 1.5 + (r() - 0.5) * 2).toFixed(3)}\n`;
    }
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(r() * 360).toFixed(2)},${((r() - 0.5) * 2).toFixed(3)}`).join("\n") + "\n";
    const L = load(baseScenario({
      phaseShifter: { bits: 3, states: "ps.csv" },
      attenuator: { bits: 3, step: "1 dB", states: "as.csv" },
      taper: { kind: "chebyshev", sidelobe: "-25 dB" },
      calibration: "cal.csv",
      beams: { kind: "uv", u: { from: -0.8, to: 0.8, step: 0.05 }, v: { from: 0, to: 0, step: 1 } },
    }), { "ps.csv": ps, "as.csv": as, "cal.csv": cal });
    const plan = L.plan;
    const prep = prepareFrequency(plan, 0);
    const q = makeQuantizer(plan, 0, prep);
    const codes = allocBeamCodes(n);
    for (let b = 0; b < plan.beams.count; b++) {
      q.beam(b, codes);
      for (let e = 0; e < n; e++) {
        const s = elementStates(plan, e);
        const R = Math.pow(10, (prep.gRefDb - plan.cals[0]!.gainDb[e]!) / 20) * plan.amplitude[e]!;
        const best = bruteForceNearest(s, R, (codes.phaseDeg[e]! * Math.PI) / 180);
        expect([codes.phaseCode[e], codes.attenCode[e]]).toEqual([best.p, best.q]);
      }
    }
  });

  it("compensates a part's phase error per code: lower rms phase error than treating the states as ideal", () => {
    // a 4-bit shifter whose states sit up to ±9° off their nominal value (invented part)
    const r = mulberry32(17);
    const err = Array.from({ length: 16 }, () => (r() - 0.5) * 18);
    const ps = "code,phase_deg,gain_db\n" + err.map((e, p) => `${p},${(p * 22.5 + e).toFixed(3)},0`).join("\n") + "\n";
    const n = 32;
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(r() * 360).toFixed(2)},0`).join("\n") + "\n";
    const common = { array: { lattice: { kind: "rectangular", columns: 32, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, attenuator: { bits: 4, step: "1 dB" }, calibration: "cal.csv", beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.1 }, v: { from: 0, to: 0, step: 1 } } };
    const withStates = load(baseScenario({ ...common, phaseShifter: { bits: 4, states: "ps.csv" } }), { "ps.csv": ps, "cal.csv": cal });
    const ideal = load(baseScenario({ ...common, phaseShifter: { bits: 4 } }), { "cal.csv": cal });
    // realized phase error of the ideal-part codes on the real part: analyse the ideal codes with the states plan
    const an = new BeamAnalyzer(withStates.plan, 0);
    const qs = makeQuantizer(withStates.plan, 0);
    const qi = makeQuantizer(ideal.plan, 0);
    const c1 = allocBeamCodes(n), c2 = allocBeamCodes(n);
    const out = new Float64Array(METRICS);
    let rmsStates = 0, rmsNaive = 0;
    for (let b = 0; b < withStates.plan.beams.count; b++) {
      qs.beam(b, c1);
      an.analyse(b, c1, out, 0, { ideal: false });
      rmsStates += out[M.rms_phase_error_deg]! ** 2;
      const withS = out[M.rms_phase_error_deg]!;
      qi.beam(b, c2);
      an.analyse(b, c2, out, 0, { ideal: false });
      rmsNaive += out[M.rms_phase_error_deg]! ** 2;
      // flat gain states: the nearest complex state is the nearest phase state, never worse on any beam
      expect(withS).toBeLessThanOrEqual(out[M.rms_phase_error_deg]! + 1e-9);
    }
    expect(Math.sqrt(rmsStates)).toBeLessThan(0.97 * Math.sqrt(rmsNaive));
  });
});
