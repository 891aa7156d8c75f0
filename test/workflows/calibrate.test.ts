/**
 * `steercode calibrate` on a simulated range (test/calibrate-sim.ts: invented arrays,
 * invented offsets, Gaussian noise on every reading; nothing here is a measurement).
 *
 * The accuracy bound comes from the noise (derived): for a small element share
 * s_n = |e_n|/|E0| the reading in dB is y_k ≈ L + (20/ln10)·Re(x·(e^{jΔ_k} − 1)), a
 * sinusoid of amplitude (20/ln10)·s_n dB. Least squares over M equally spaced codes
 * gives each sinusoid coefficient a standard deviation σ·√(2/M) (σ the reading noise
 * in dB), so
 *   σ_phase = σ·√(2/M)·(ln10/20)/s_n  (rad),   σ_gain = σ·√(2/M)/s_n  (dB).
 * Offsets are defined up to one common phase and gain, so errors are compared after
 * removing their mean. Every element must lie within 4.5 σ (a 1-in-150 000 event per
 * element for a Gaussian), and the rms of error/σ must be near 1 (0.5 … 1.6).
 */
import { writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { describe, expect, it } from "vitest";
import { baseScenario, load, writeScenario } from "../helpers.js";
import { fieldShare, idealStates, randomTruth, referTruth, revCsv, simulateRev, wrap, type SimProbe, type StateFn, type Truth } from "../calibrate-sim.js";
import { runCalibrate, type CalibrateResult } from "../../src/workflows/calibrate.js";
import type { Probe } from "../../src/core/calibrate/index.js";
import { runTables } from "../../src/core/engine.js";
import { loadScenario } from "../../src/io/scenario.js";
import type { Plan } from "../../src/core/plan.js";

const BITS = 4;
const ALL = Array.from({ length: 2 ** BITS }, (_, k) => k);
const SIGMA = 0.02; // dB, the simulated reading noise
const DOC = baseScenario({
  array: { lattice: { kind: "rectangular", columns: 8, rows: 8, dx: "0.5 lambda", dy: "0.5 lambda" } },
  phaseShifter: { bits: BITS },
  beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.1 }, v: { from: -0.6, to: 0.6, step: 0.2 } },
});
const plan0 = load(DOC).plan;
const N = plan0.elements.count;
const truth = randomTruth(N, 20261202);

function calibrate(rows: ReturnType<typeof simulateRev>, probe: Probe, files: Record<string, string> = {}, doc = DOC): CalibrateResult {
  const s = writeScenario(doc, files);
  const data = join(dirname(s), "rev.csv");
  writeFileSync(data, revCsv(rows));
  return runCalibrate({ scenario: s, data, method: "rev", probe });
}

/** errors against the referred truth, with their common part removed, and the predicted σ of each */
function errors(plan: Plan, r: CalibrateResult, t: Truth, states: StateFn, probe: SimProbe, codes = ALL.length) {
  const ref = referTruth(plan, t);
  const share = fieldShare(plan, t, states, probe);
  const els = r.frequencies[0]!.elements;
  const dp = els.map((e) => wrap(e.phaseDeg - ref.phaseDeg[e.element]!));
  const dg = els.map((e) => e.gainDb - ref.gainDb[e.element]!);
  const mp = dp.reduce((a, b) => a + b, 0) / dp.length, mg = dg.reduce((a, b) => a + b, 0) / dg.length;
  const k = SIGMA * Math.sqrt(2 / codes);
  return els.map((e, i) => ({
    element: e.element,
    phaseErr: dp[i]! - mp,
    gainErr: dg[i]! - mg,
    phaseSigma: ((k * Math.LN10) / 20 / share[e.element]!) * (180 / Math.PI),
    gainSigma: k / share[e.element]!,
    toolPhaseStd: e.phaseStdDeg!,
  }));
}

function expectWithinNoise(errs: ReturnType<typeof errors>) {
  const zp = errs.map((e) => e.phaseErr / e.phaseSigma), zg = errs.map((e) => e.gainErr / e.gainSigma);
  for (const e of errs) {
    expect(Math.abs(e.phaseErr), `element ${e.element} phase`).toBeLessThan(4.5 * e.phaseSigma);
    expect(Math.abs(e.gainErr), `element ${e.element} gain`).toBeLessThan(4.5 * e.gainSigma);
  }
  const rms = (a: number[]) => Math.sqrt(a.reduce((s, x) => s + x * x, 0) / a.length);
  expect(rms(zp)).toBeGreaterThan(0.5);
  expect(rms(zp)).toBeLessThan(1.6);
  expect(rms(zg)).toBeGreaterThan(0.5);
  expect(rms(zg)).toBeLessThan(1.6);
  // the tool's own 1σ (from the fit residual) is honest: its median within a factor 1.6 of the derived one
  const ratio = errs.map((e) => e.toolPhaseStd / e.phaseSigma).sort((a, b) => a - b)[errs.length >> 1]!;
  expect(ratio).toBeGreaterThan(1 / 1.6);
  expect(ratio).toBeLessThan(1.6);
}

const BORESIGHT: Probe = { kind: "far", azDeg: 0, elDeg: 0 };

describe("simulated range: REV recovers known offsets within the accuracy the noise allows", () => {
  it("far-field probe at boresight, ideal states, all 16 codes, σ = 0.02 dB", () => {
    const r = calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: BORESIGHT, codes: ALL, noiseDb: SIGMA, seed: 1 }), BORESIGHT);
    expectWithinNoise(errors(plan0, r, truth, idealStates(BITS), BORESIGHT));
    // derived: with M readings and 3 fitted parameters the rms residual is ≈ σ·√((M − 3)/M)
    expect(r.rmsResidualDb!).toBeGreaterThan(0.8 * SIGMA * Math.sqrt(13 / 16));
    expect(r.rmsResidualDb!).toBeLessThan(1.2 * SIGMA * Math.sqrt(13 / 16));
    // derived: the enabled elements' fields add up to the whole array's, Σ x_n = 1; each x_n carries an error of
    // σ·√(2/M)·(ln10/20) per component, so the sum misses 1 by about √N times that (bound: 4×)
    expect(r.frequencies[0]!.fieldSum!.error).toBeLessThan(4 * Math.sqrt(N) * SIGMA * Math.sqrt(2 / 16) * (Math.LN10 / 20) * Math.SQRT2);
    expect(r.flagged).toEqual([]);
    expect(r.frequencies[0]!.elements.every((e) => e.decided && e.kept !== undefined)).toBe(true);
  });

  it("probe 20° off boresight gives the same offsets as at boresight", () => {
    const off: Probe = { kind: "far", azDeg: 20, elDeg: 0 };
    const clean = (p: Probe) => calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: p, codes: ALL, noiseDb: 0, seed: 1 }), p);
    const a = clean(BORESIGHT), b = clean(off);
    a.frequencies[0]!.elements.forEach((e, i) => {
      const f = b.frequencies[0]!.elements[i]!;
      expect(Math.abs(wrap(e.phaseDeg - f.phaseDeg))).toBeLessThan(1e-5);
      expect(Math.abs(e.gainDb - f.gainDb)).toBeLessThan(1e-6);
    });
    const noisy = calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: off, codes: ALL, noiseDb: SIGMA, seed: 2 }), off);
    expectWithinNoise(errors(plan0, noisy, truth, idealStates(BITS), off));
    // and the path matters: the same readings taken as boresight readings are off by k·r_n·sin 20°
    const wrong = calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: off, codes: ALL, noiseDb: 0, seed: 1 }), BORESIGHT);
    const worst = Math.max(...wrong.frequencies[0]!.elements.map((e, i) => Math.abs(wrap(e.phaseDeg - a.frequencies[0]!.elements[i]!.phaseDeg))));
    expect(worst).toBeGreaterThan(100); // derived: 180°·sin 20°·7 columns ≈ 431° of spread across the aperture
  });

  it("near-field probe: exact distance (phase and 1/r) removed", () => {
    const p: Probe = { kind: "near", x: 0.01, y: -0.02, z: 0.25 };
    const clean = calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: p, codes: ALL, noiseDb: 0, seed: 1 }), p);
    const ref = referTruth(plan0, truth);
    for (const e of clean.frequencies[0]!.elements) {
      expect(Math.abs(wrap(e.phaseDeg - ref.phaseDeg[e.element]!))).toBeLessThan(1e-5);
      expect(Math.abs(e.gainDb - ref.gainDb[e.element]!)).toBeLessThan(1e-6);
    }
    const noisy = calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: p, codes: ALL, noiseDb: SIGMA, seed: 3 }), p);
    expectWithinNoise(errors(plan0, noisy, truth, idealStates(BITS), p));
  });

  it("non-ideal measured phase states (realized phase and gain of every code in the model)", () => {
    const rnd = (i: number) => Math.sin(i * 12.9898) * 43758.5453 - Math.floor(Math.sin(i * 12.9898) * 43758.5453);
    const ps: { e: number; k: number; ph: number; g: number }[] = [];
    for (let e = 0; e < N; e++) for (const k of ALL) ps.push({ e, k, ph: k * 22.5 + (rnd(e * 16 + k) - 0.5) * 16 + 3, g: (rnd(1000 + e * 16 + k) - 0.5) * 1.2 });
    const table = new Map(ps.map((s) => [`${s.e}/${s.k}`, s]));
    const states: StateFn = (n, k) => {
      const s = table.get(`${n}/${k}`)!;
      return { mag: 10 ** (s.g / 20), ang: (s.ph * Math.PI) / 180 };
    };
    const csv = "element,code,phase_deg,gain_db\n" + ps.map((s) => `${s.e},${s.k},${s.ph.toFixed(6)},${s.g.toFixed(6)}`).join("\n") + "\n";
    const doc = { ...DOC, phaseShifter: { bits: BITS, states: "ps.csv" } };
    const clean = calibrate(simulateRev(plan0, truth, { states, probe: BORESIGHT, codes: ALL, noiseDb: 0, seed: 1 }), BORESIGHT, { "ps.csv": csv }, doc);
    const ref = referTruth(plan0, truth);
    for (const e of clean.frequencies[0]!.elements) {
      expect(Math.abs(wrap(e.phaseDeg - ref.phaseDeg[e.element]!))).toBeLessThan(1e-5);
      expect(Math.abs(e.gainDb - ref.gainDb[e.element]!)).toBeLessThan(1e-5);
    }
    const rows = simulateRev(plan0, truth, { states, probe: BORESIGHT, codes: ALL, noiseDb: SIGMA, seed: 4 });
    const noisy = calibrate(rows, BORESIGHT, { "ps.csv": csv }, doc);
    expectWithinNoise(errors(plan0, noisy, truth, states, BORESIGHT));
    // the states matter: the same readings solved with ideal states miss by far more than the noise allows
    const naive = calibrate(rows, BORESIGHT);
    const e2 = errors(plan0, naive, truth, states, BORESIGHT);
    expect(Math.max(...e2.map((e) => Math.abs(e.phaseErr) / e.phaseSigma))).toBeGreaterThan(6);
  });

  it("four codes, not equally spaced (0, 3, 7, 12), still solve by least squares", () => {
    const codes = [0, 3, 7, 12];
    const r = calibrate(simulateRev(plan0, truth, { states: idealStates(BITS), probe: BORESIGHT, codes, noiseDb: 0, seed: 1 }), BORESIGHT);
    const ref = referTruth(plan0, truth);
    for (const e of r.frequencies[0]!.elements) expect(Math.abs(wrap(e.phaseDeg - ref.phaseDeg[e.element]!))).toBeLessThan(1e-5);
  });

  it("identical inputs give identical bytes", () => {
    const rows = simulateRev(plan0, truth, { states: idealStates(BITS), probe: BORESIGHT, codes: ALL, noiseDb: SIGMA, seed: 1 });
    expect(calibrate(rows, BORESIGHT).calCsv).toBe(calibrate(rows, BORESIGHT).calCsv);
  });

  it("a dead channel and a stuck phase-shifter bit are flagged, with what to do", () => {
    const t2: Truth = { phaseDeg: [...truth.phaseDeg], gainDb: [...truth.gainDb] };
    t2.gainDb[9] = -35;
    const stuck: StateFn = (n, k) => idealStates(BITS)(n, n === 20 ? k & ~4 : k);
    const r = calibrate(simulateRev(plan0, t2, { states: stuck, probe: BORESIGHT, codes: ALL, noiseDb: SIGMA, seed: 5 }), BORESIGHT);
    const byId = new Map(r.frequencies[0]!.elements.map((e) => [e.element, e]));
    expect(byId.get(9)!.flags).toContain("dead");
    expect(byId.get(9)!.advice.join(" ")).toMatch(/add 9 to "array\.disabled"/);
    expect(byId.get(20)!.flags).toContain("poor-fit");
    expect(byId.get(20)!.advice.join(" ")).toMatch(/re-measure/);
    expect(r.calCsv).toMatch(/# flagged: .*element 9 dead.*element 20 poor-fit/);
  });
});

describe("REV root ambiguity on a whole array", () => {
  it("when the elements' fields cancel at the probe (|E0| small) every choice is flagged undecided and the sum check warns", () => {
    // invented: 15 random offsets whose fields happen to nearly cancel at boresight (|e_n/E0| ≈ 2–3)
    const doc = baseScenario({ array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" }, disabled: [15] }, phaseShifter: { bits: 3 } });
    const plan = load(doc).plan;
    const t = randomTruth(16, 99);
    expect(Math.min(...fieldShare(plan, t, idealStates(3), BORESIGHT).slice(0, 15))).toBeGreaterThan(1);
    const r = calibrate(simulateRev(plan, t, { states: idealStates(3), probe: BORESIGHT, codes: [0, 1, 2, 3, 4, 5, 6, 7], noiseDb: 0.01, seed: 7 }), BORESIGHT, {}, doc);
    const els = r.frequencies[0]!.elements;
    expect(els.every((e) => e.flags.includes("ambiguous-root") && e.decided === false)).toBe(true);
    expect(els[0]!.why).toMatch(/cannot be decided/);
    expect(els[0]!.advice.join(" ")).toMatch(/phased up toward the probe/);
    expect(r.frequencies[0]!.warnings.join(" ")).toMatch(/do not add up to the whole array's/);
    expect(r.calCsv).toMatch(/# warning: the kept element fields do not add up/);
  });
});

describe("build with the produced cal.csv equals build with the true offsets, but for codes within the fit error of a rounding boundary", () => {
  it("counts and bounds the codes that differ", () => {
    const rows = simulateRev(plan0, truth, { states: idealStates(BITS), probe: BORESIGHT, codes: ALL, noiseDb: SIGMA, seed: 1 });
    const r = calibrate(rows, BORESIGHT);
    // the true offsets, referred the same way (offsets are defined up to one common phase and gain)
    const ref = referTruth(plan0, truth);
    const trueCal = "element,phase_offset_deg,gain_offset_db\n" + ref.phaseDeg.map((p, i) => `${i},${p.toFixed(9)},${ref.gainDb[i]!.toFixed(9)}`).join("\n") + "\n";
    const pa = loadScenario(writeScenario({ ...DOC, calibration: "cal.csv" }, { "cal.csv": r.calCsv })).plan;
    const pb = loadScenario(writeScenario({ ...DOC, calibration: "cal.csv" }, { "cal.csv": trueCal })).plan;
    const codes = (p: Plan) => {
      const out: number[][] = [];
      runTables(p, (_f, _b, _w, c) => out.push([...Array.from(c.phaseCode), ...Array.from(c.attenCode), ...Array.from(c.phaseDeg), ...Array.from(c.attenDb)]));
      return out;
    };
    const A = codes(pa), B = codes(pb);
    const lsb = 360 / 2 ** BITS, step = 0.5;
    let phaseDiff = 0, attenDiff = 0, expected = 0, expectedAtten = 0;
    const dc = Array.from({ length: N }, (_, i) => Math.abs(wrap(pa.cals[0]!.phaseDeg[i]! - pb.cals[0]!.phaseDeg[i]!)));
    for (let b = 0; b < A.length; b++) {
      for (let i = 0; i < N; i++) {
        expected += dc[i]! / lsb; // derived: a code flips when a boundary falls between the two values: probability |Δc|/LSB
        const pA = A[b]![i]!, pB = B[b]![i]!;
        const psiB = B[b]![2 * N + i]!;
        if (pA !== pB) {
          phaseDiff++;
          // the true commanded phase sits within the fit error |Δc| of a rounding boundary
          const frac = psiB / lsb - Math.floor(psiB / lsb);
          expect(Math.abs(frac - 0.5) * lsb).toBeLessThanOrEqual(dc[i]! + 1e-9);
          expect(Math.min(Math.abs(pA - pB), 2 ** BITS - Math.abs(pA - pB))).toBe(1);
        }
        expectedAtten += Math.abs(A[b]![3 * N + i]! - B[b]![3 * N + i]!) / step;
        if (A[b]![N + i] !== B[b]![N + i]) {
          attenDiff++;
          const aB = B[b]![3 * N + i]!, aA = A[b]![3 * N + i]!;
          const frac = aB / step - Math.floor(aB / step);
          expect(Math.abs(frac - 0.5) * step).toBeLessThanOrEqual(Math.abs(aA - aB) + 1e-9);
        }
      }
    }
    const words = A.length * N;
    // the fit errors are a few hundredths of a degree to a few tenths: a small share of codes flips
    expect(phaseDiff).toBeLessThanOrEqual(2 * expected + 10);
    expect(phaseDiff / words).toBeLessThan(0.05);
    expect(attenDiff).toBeLessThanOrEqual(2 * expectedAtten + 10);
    console.log(`calibrate→build: ${phaseDiff} of ${words} phase codes differ (expected ≈ ${expected.toFixed(1)} from |Δc|/LSB), ${attenDiff} attenuation codes (expected ≈ ${expectedAtten.toFixed(1)})`);
  });
});
