/**
 * The optimized quantizer (interface contract, "Quantizer `optimized`"): never worse than
 * nearest on the exact analysis, the gain and pointing limits held on every beam, a
 * comparison with exhaustive search on tiny arrays, and the periodic-error case.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { allocBeamCodes, makeQuantizer, type BeamCodes } from "../../src/core/quantize/index.js";
import { OptimizedQuantizer, POINTING_ALLOWANCE_DEG, DEFAULT_EXTRA_LOSS_DB } from "../../src/core/quantize/optimized.js";
import { BeamAnalyzer, M, METRICS } from "../../src/core/pattern/analyze.js";
import type { Plan } from "../../src/core/plan.js";
import { baseScenario, load } from "../helpers.js";

const NO_ATTEN_WORD = { bits: 16, off: 0, fields: [{ name: "phase", shift: 0, width: 8 }] };

function exactOf(an: BeamAnalyzer, b: number, codes: BeamCodes): { psl: number; gl: number; pt: number } {
  const m = new Float64Array(METRICS);
  an.analyse(b, codes, m, 0, { ideal: false });
  return { psl: m[M.psl_db]!, gl: m[M.gain_loss_db]!, pt: m[M.pointing_error_deg]! };
}

/**
 * Every beam of every frequency: the optimized codes, analysed afresh, are never worse
 * than nearest's in PSL and hold both limits; the quantizer's report is that analysis.
 */
function checkPlan(plan: Plan, beams: number[] = Array.from({ length: plan.beams.count }, (_, b) => b)): { before: number; after: number }[] {
  const nearestPlan: Plan = { ...plan, quantizer: { method: "nearest", seed: 1 } };
  const out: { before: number; after: number }[] = [];
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    const q = makeQuantizer(plan, fi) as OptimizedQuantizer;
    expect(q).toBeInstanceOf(OptimizedQuantizer);
    const qn = makeQuantizer(nearestPlan, fi);
    const an = new BeamAnalyzer(plan, fi);
    const co = allocBeamCodes(plan.elements.count);
    const cn = allocBeamCodes(plan.elements.count);
    for (const b of beams) {
      q.beam(b, co);
      qn.beam(b, cn);
      const n = exactOf(an, b, cn);
      const o = exactOf(an, b, co);
      const r = q.report;
      // the report is the exact analysis of the codes returned (same public analysis)
      expect(r.pslBeforeDb).toBe(n.psl);
      expect(r.gainLossBeforeDb).toBe(n.gl);
      expect(r.pointingBeforeDeg).toBe(n.pt);
      if (Number.isNaN(n.psl)) {
        expect(Array.from(co.phaseCode)).toEqual(Array.from(cn.phaseCode));
        continue;
      }
      expect(r.pslAfterDb).toBe(o.psl);
      expect(r.gainLossAfterDb).toBe(o.gl);
      expect(r.pointingAfterDeg).toBe(o.pt);
      // never worse than nearest; limits held (derived: the contract's rules)
      expect(o.psl).toBeLessThanOrEqual(n.psl);
      const limit = plan.quantizer.maxGainLossDb ?? n.gl + DEFAULT_EXTRA_LOSS_DB;
      if (n.gl <= limit) expect(o.gl).toBeLessThanOrEqual(limit);
      else expect(Array.from(co.phaseCode)).toEqual(Array.from(cn.phaseCode)); // nearest already over the limit: kept
      expect(o.pt).toBeLessThanOrEqual(n.pt + POINTING_ALLOWANCE_DEG);
      // codes are codes of the part; disabled elements keep nearest's; commanded values are nearest's
      const np = 2 ** plan.phaseBits, nq = 2 ** plan.attenBits;
      for (let i = 0; i < plan.elements.count; i++) {
        expect(co.phaseCode[i]).toBeGreaterThanOrEqual(0);
        expect(co.phaseCode[i]).toBeLessThan(np);
        expect(co.attenCode[i]).toBeGreaterThanOrEqual(0);
        expect(co.attenCode[i]).toBeLessThan(nq);
        if (!plan.elements.enabled[i]) {
          expect(co.phaseCode[i]).toBe(cn.phaseCode[i]);
          expect(co.attenCode[i]).toBe(cn.attenCode[i]);
        }
        expect(co.phaseDeg[i]).toBe(cn.phaseDeg[i]);
        expect(co.attenDb[i]).toBe(cn.attenDb[i]);
      }
      expect(co.clipped).toBe(cn.clipped);
      out.push({ before: n.psl, after: o.psl });
    }
  }
  return out;
}

describe("optimized quantizer: never worse than nearest, limits held (derived from the contract)", () => {
  it("random small arrays, bit depths, calibrations, tapers, beams and limits (property, fast-check)", () => {
    fc.assert(
      fc.property(
        fc.record({
          cols: fc.integer({ min: 3, max: 7 }),
          rows: fc.integer({ min: 1, max: 3 }),
          bits: fc.integer({ min: 2, max: 4 }),
          attenBits: fc.integer({ min: 0, max: 3 }),
          spacing: fc.constantFrom("0.5 lambda", "0.6 lambda", "0.4 lambda"),
          taper: fc.constantFrom({ kind: "uniform" }, { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, { kind: "chebyshev", sidelobe: "-25 dB" }),
          u: fc.double({ min: -0.6, max: 0.6, noNaN: true }),
          v: fc.double({ min: -0.3, max: 0.3, noNaN: true }),
          cal: fc.boolean(),
          calSeed: fc.integer({ min: 1, max: 1e6 }),
          limit: fc.option(fc.constantFrom(0.3, 0.6, 1.5), { nil: undefined }),
          seed: fc.integer({ min: 0, max: 1000 }),
        }),
        (c) => {
          const n = c.cols * c.rows;
          let s = c.calSeed;
          const rnd = () => ((s = (s * 48271) % 2147483647) / 2147483647);
          const files: Record<string, string> = {};
          if (c.cal) files["cal.csv"] = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(rnd() * 360 - 180).toFixed(2)},${(rnd() - 0.5).toFixed(3)}`).join("\n") + "\n";
          const L = load(
            baseScenario({
              array: { lattice: { kind: "rectangular", columns: c.cols, rows: c.rows, dx: c.spacing, dy: "0.5 lambda" } },
              beams: { kind: "list", file: "beams.csv" },
              phaseShifter: { bits: c.bits },
              ...(c.attenBits ? { attenuator: { bits: c.attenBits, step: "1 dB" } } : { attenuator: undefined }),
              taper: c.taper,
              ...(c.cal ? { calibration: "cal.csv" } : {}),
              quantizer: { method: "optimized", seed: c.seed, ...(c.limit !== undefined ? { maxGainLossDb: c.limit } : {}) },
              word: { bits: 16, off: 0, fields: [{ name: "phase", shift: 0, width: 8 }, ...(c.attenBits ? [{ name: "atten", shift: 8, width: 8 }] : [])] },
            }),
            { ...files, "beams.csv": `u,v\n${c.u.toFixed(4)},${c.v.toFixed(4)}\n` },
          );
          checkPlan(L.plan);
        },
      ),
      { numRuns: 30, seed: 12 },
    );
  });

  const CAL16 = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 16 }, (_, i) => `${i},${((i * 137) % 360) - 180},${((i % 5) - 2) * 0.3}`).join("\n") + "\n";
  it("measured phase and attenuator states (per element), calibration, a disabled element, two frequencies", () => {
    const ps = ["code,phase_deg,gain_db,element"];
    const as = ["code,atten_db,phase_deg,element"];
    for (let e = 0; e < 16; e++) {
      for (let p = 0; p < 8; p++) ps.push(`${p},${(p * 45 + ((e * 7 + p * 3) % 9) - 4).toFixed(1)},${(((e + p) % 3) * 0.2 - 0.2).toFixed(2)},${e}`);
      for (let q = 0; q < 4; q++) as.push(`${q},${(q * 2 + ((e + q) % 2) * 0.2).toFixed(2)},${(q * 3 - ((e * q) % 4)).toFixed(1)},${e}`);
    }
    const L = load(
      baseScenario({
        frequency: ["9.5 GHz", "10.5 GHz"],
        array: { lattice: { kind: "rectangular", columns: 8, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" }, disabled: [5] },
        beams: { kind: "uv", u: { from: -0.45, to: 0.45, step: 0.3 }, v: { from: 0, to: 0, step: 1 } },
        phaseShifter: { bits: 3, states: "ps.csv" },
        attenuator: { bits: 2, step: "2 dB", states: "as.csv" },
        taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
        calibration: "cal.csv",
        quantizer: { method: "optimized", seed: 3 },
      }),
      { "ps.csv": ps.join("\n") + "\n", "as.csv": as.join("\n") + "\n", "cal.csv": CAL16 },
    );
    const r = checkPlan(L.plan);
    expect(r.length).toBe(8);
  });

  it("an element list (non-planar: z varies) with an explicit gain-loss limit", () => {
    const els = ["element,x_m,y_m,z_m"];
    for (let i = 0; i < 10; i++) els.push(`${i},${(0.015 * i + (i % 3) * 0.002).toFixed(4)},${((i % 2) * 0.012).toFixed(4)},${((i % 4) * 0.001).toFixed(4)}`);
    const L = load(
      baseScenario({
        array: { elements: "els.csv" },
        beams: { kind: "azel", az: { from: -30, to: 30, step: 30 }, el: { from: 0, to: 10, step: 10 } },
        phaseShifter: { bits: 2 },
        taper: { kind: "chebyshev", sidelobe: "-20 dB" },
        quantizer: { method: "optimized", seed: 5, maxGainLossDb: 1 },
      }),
      { "els.csv": els.join("\n") + "\n" },
    );
    expect(checkPlan(L.plan).length).toBe(6);
  });
});

describe("optimized quantizer vs exhaustive search on tiny arrays (derived: brute force over every code set)", () => {
  it("6 elements, 2 bits, no attenuator: exhaustive ≤ optimized ≤ nearest; the gap is reported, not claimed zero", () => {
    const L = load(
      baseScenario({
        array: { lattice: { kind: "rectangular", columns: 6, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
        beams: { kind: "list", file: "beams.csv" },
        phaseShifter: { bits: 2 },
        attenuator: undefined,
        quantizer: { method: "optimized", seed: 1 },
        word: NO_ATTEN_WORD,
      }),
      { "beams.csv": "u,v\n0.07,0\n0.13,0\n0.21,0\n0.33,0\n0.46,0\n" },
    );
    const plan = L.plan;
    const q = makeQuantizer(plan, 0) as OptimizedQuantizer;
    const an = new BeamAnalyzer(plan, 0);
    const co = allocBeamCodes(6);
    const trial = allocBeamCodes(6);
    const gaps: number[] = [];
    for (let b = 0; b < plan.beams.count; b++) {
      q.beam(b, co);
      const r = q.report;
      const limit = r.gainLossBeforeDb + DEFAULT_EXTRA_LOSS_DB;
      const ptLimit = r.pointingBeforeDeg + POINTING_ALLOWANCE_DEG;
      let best = Infinity;
      trial.attenCode.set(co.attenCode);
      for (let k = 0; k < 4 ** 6; k++) {
        for (let i = 0, x = k; i < 6; i++, x >>= 2) trial.phaseCode[i] = x & 3;
        const e = exactOf(an, b, trial);
        if (e.gl <= limit && e.pt <= ptLimit && e.psl < best) best = e.psl;
      }
      expect(best).toBeLessThanOrEqual(r.pslAfterDb + 1e-9);
      expect(r.pslAfterDb).toBeLessThanOrEqual(r.pslBeforeDb);
      gaps.push(r.pslAfterDb - best);
      console.log(`exhaustive check, 6 elements, 2 bits, u=${plan.beams.u[b]}: nearest ${r.pslBeforeDb.toFixed(2)} dB, optimized ${r.pslAfterDb.toFixed(2)} dB, exhaustive best ${best.toFixed(2)} dB, gap ${(r.pslAfterDb - best).toFixed(2)} dB`);
    }
    // measured on these five beams (2026-12-02): gaps 0, 0.07, 0, 1.97, 0 dB — coordinate descent over ±1 code
    // from nearest is a local search and can stop short; this bound only makes a regression show
    expect(Math.max(...gaps)).toBeLessThan(GAP_BOUND_DB);
    expect(gaps.filter((g) => g < 0.01).length).toBeGreaterThanOrEqual(3);
  });
});

const GAP_BOUND_DB = 2.5;

describe("periodic errors: the issue's trial (16×16 Taylor −30 dB, 3 bits, no calibration, scanned beams)", () => {
  it("lowers PSL by at least 6 dB on each tested beam (issue's numpy trial: −16.9 → −24.9 dB)", () => {
    const L = load(
      baseScenario({
        array: { lattice: { kind: "rectangular", columns: 16, rows: 16, dx: "0.5 lambda", dy: "0.5 lambda" } },
        beams: { kind: "list", file: "beams.csv" },
        phaseShifter: { bits: 3 },
        taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 },
        quantizer: { method: "optimized", seed: 1 },
      }),
      { "beams.csv": "u,v\n0.16,0\n0.38,0\n0.27,0.15\n" },
    );
    const r = checkPlan(L.plan);
    for (const x of r) {
      console.log(`periodic case: nearest ${x.before.toFixed(2)} dB → optimized ${x.after.toFixed(2)} dB`);
      expect(x.before).toBeGreaterThan(-20); // quantisation lobes well above the −30 dB design
      expect(x.before - x.after).toBeGreaterThanOrEqual(6);
    }
  });
});

describe("with an element pattern: the total pattern's PSL (the analysis's), not the array factor's", () => {
  // 12 × 12 at λ/2, Dolph–Chebyshev −30 dB, 4 bits, invented calibration (seeded), cos² θ
  // elements; scanned beams. The sampled objective had been |AF|² alone, so the descent
  // pushed down lobes the element already suppresses and the exact analysis (|AF|²·E)
  // rarely improved: on these beams the PSL was lowered on one beam only (1.26 dB), now on
  // six of eight (2.6–5.3 dB; median 3.6 dB)
  it("lowers PSL on scanned beams with cos² elements (median over 8 beams > 2 dB)", () => {
    let seed = 20261203;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    let cal = "element,phase_offset_deg,gain_offset_db\n";
    for (let e = 0; e < 144; e++) cal += `${e},${(360 * rnd() - 180).toFixed(2)},${(2 * rnd() - 1).toFixed(3)}\n`;
    const L = load(
      baseScenario({
        array: { lattice: { kind: "rectangular", columns: 12, rows: 12, dx: "0.5 lambda", dy: "0.5 lambda" } },
        beams: { kind: "list", file: "beams.csv" },
        phaseShifter: { bits: 4 },
        taper: { kind: "chebyshev", sidelobe: "-30 dB" },
        calibration: "cal.csv",
        element: { pattern: "cosine", exponent: 2 },
        quantizer: { method: "optimized", seed: 1 },
      }),
      { "beams.csv": "az_deg,el_deg\n-30,-45\n-15,-45\n-60,-30\n-30,-30\n-60,-15\n-15,-15\n0,-15\n30,-15\n", "cal.csv": cal },
    );
    const r = checkPlan(L.plan);
    const gains = r.map((x) => x.before - x.after).sort((a, b) => a - b);
    console.log(`cos² element: PSL lowered by ${gains.map((g) => g.toFixed(2)).join(", ")} dB`);
    expect((gains[3]! + gains[4]!) / 2).toBeGreaterThan(2);
  });
});

describe("determinism", () => {
  it("the same codes from a fresh quantizer, in any beam order; another seed may differ but holds the same guarantees", () => {
    const L = load(
      baseScenario({
        array: { lattice: { kind: "rectangular", columns: 8, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" } },
        beams: { kind: "uv", u: { from: 0.1, to: 0.5, step: 0.2 }, v: { from: 0, to: 0.2, step: 0.2 } },
        taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
        quantizer: { method: "optimized", seed: 9 },
      }),
    );
    const plan = L.plan;
    const nb = plan.beams.count;
    const run = (order: number[]) => {
      const q = makeQuantizer(plan, 0);
      const c = allocBeamCodes(plan.elements.count);
      const out: number[][] = [];
      for (const b of order) {
        q.beam(b, c);
        out[b] = [...c.phaseCode, ...c.attenCode];
      }
      return out;
    };
    const fwd = run([...Array(nb).keys()]);
    const back = run([...Array(nb).keys()].reverse());
    expect(back).toEqual(fwd);
  });
});
