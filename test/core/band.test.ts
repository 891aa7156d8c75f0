import { describe, expect, it } from "vitest";
import { BandAnalyzer, calibrationAt, squintBandwidth, SQUINT_METRICS } from "../../src/core/band.js";
import { BeamAnalyzer, METRICS, M } from "../../src/core/pattern/analyze.js";
import { allocBeamCodes, makeQuantizer } from "../../src/core/quantize/index.js";
import type { Plan } from "../../src/core/plan.js";
import { SPEED_OF_LIGHT } from "../../src/core/units.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { deriveFacts } from "../../src/core/facts.js";
import { baseScenario, load } from "../helpers.js";

const DEG = Math.PI / 180;

/** Codes of beam b at table frequency 0, played at the given band frequencies: [k][peak_u, peak_v, pointing, gain loss]. */
function play(plan: Plan, b: number, bandHz: number[]): number[][] {
  const p: Plan = { ...plan, band: { frequenciesHz: bandHz, frequenciesExact: bandHz.map(String) } };
  const q = makeQuantizer(p, 0);
  const codes = allocBeamCodes(p.elements.count);
  q.beam(b, codes);
  const out = new Float64Array(bandHz.length * SQUINT_METRICS);
  new BandAnalyzer(p).analyse(b, codes, out, 0);
  return bandHz.map((_, k) => Array.from(out.subarray(k * SQUINT_METRICS, (k + 1) * SQUINT_METRICS)));
}

/**
 * A 16-element line along x whose ideal phases at 10 GHz for θ = 60° are exact
 * multiples of 45°: dx = λ0/(4·sin 60°) gives a progression of 90° per element and the
 * centred positions put every phase on a 3-bit code, so the realized weights are the
 * ideal phase-steered weights (no quantisation error).
 */
function exactLine(element?: unknown) {
  const lambda0 = SPEED_OF_LIGHT / 10e9;
  const dx = lambda0 / (4 * Math.sin(60 * DEG));
  return load(baseScenario({
    frequency: "10 GHz",
    array: { lattice: { kind: "rectangular", columns: 16, rows: 1, dx, dy: "0.5 lambda" } },
    beams: { kind: "thetaphi", theta: { from: 60, to: 60, step: 1 }, phi: { from: 0, to: 0, step: 1 } },
    phaseShifter: { bits: 3 },
    ...(element ? { element } : {}),
  })).plan;
}

describe("squint of a phase-steered table across the band", () => {
  it("a 10 GHz table for θ = 60° played at 10.5 GHz points at 55.567° (u0·f0/f exactly)", () => {
    // derived: with φ_n = −k0·x_n·u0 the array factor at f is Σ a_n·exp(jk·x_n·(u − u0·f0/f)),
    // whose peak is at u = u0·f0/f exactly: asin(sin 60° · 10/10.5) = 55.567°
    const plan = exactLine();
    const [at10, at105] = play(plan, 0, [10e9, 10.5e9]);
    expect(at10![2]).toBeLessThan(1e-6); // played at its own frequency: on target
    const u = (Math.sin(60 * DEG) * 10) / 10.5;
    expect(at105![0]).toBeCloseTo(u, 8); // the refinement stops when a step is < 1e-7 cell (~1e-7°)
    expect(Math.asin(at105![0]!) / DEG).toBeCloseTo(55.567, 3);
    expect(at105![2]).toBeCloseTo(60 - Math.asin(u) / DEG, 6);
    // from memory (textbook first-order squint): Δθ ≈ −(Δf/f0)·tan θ0 = −4.96°; the exact −4.433° is within 12 % of it
    const first = (0.05 * Math.tan(60 * DEG)) / DEG;
    expect(Math.abs(at105![2]! - first) / first).toBeLessThan(0.12);
  });

  it("played at the table frequency, a band row equals the beams.csv metrics (same codes, same analysis)", () => {
    // derived: same frequency, same codes, same calibration → the same peak, pointing and gain loss
    const r = mulberry32(5);
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 48 }, (_, i) => `${i},${(r() * 360).toFixed(3)},${((r() - 0.5) * 2).toFixed(3)}`).join("\n") + "\n";
    const plan = load(baseScenario({
      frequency: "28 GHz",
      array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "azel", az: { from: -40, to: 40, step: 40 }, el: { from: 0, to: 20, step: 20 } },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
      phaseShifter: { bits: 5 },
      calibration: "cal.csv",
      element: { pattern: "cosine", exponent: 1.3 },
    }), { "cal.csv": cal }).plan;
    const an = new BeamAnalyzer(plan, 0);
    const q = makeQuantizer(plan, 0, an.prep);
    const codes = allocBeamCodes(plan.elements.count);
    const m = new Float64Array(METRICS);
    for (let b = 0; b < plan.beams.count; b++) {
      q.beam(b, codes);
      an.analyse(b, codes, m, 0);
      const [row] = play(plan, b, [28e9]);
      expect(row![0]).toBeCloseTo(m[M.peak_u]!, 12);
      expect(row![1]).toBeCloseTo(m[M.peak_v]!, 12);
      expect(row![2]).toBeCloseTo(m[M.pointing_error_deg]!, 10);
      expect(row![3]).toBeCloseTo(m[M.gain_loss_db]!, 10);
    }
  });

  it("uses the one calibration set at every band frequency when cal.csv has no frequency_hz", () => {
    // interface contract ("Calibration per frequency"): without a frequency_hz column one set serves every frequency
    const plan = exactLine();
    expect(calibrationAt(plan, 9e9)).toBe(plan.cals[0]);
  });

  it("with a two-frequency cal.csv, plays each band point with the calibration at that frequency (listed or interpolated)", () => {
    // interface contract ("Calibration per frequency"; "Element pattern and band analysis": calibration at the band
    // frequency): listed → that set; in between → gain linear in dB, phase linear the shorter way round.
    // 9.5 GHz: c = 170° (element 0), 5·i° (others), g = 0.1·i dB; 10.5 GHz: c = −170° (element 0), 5·i + 40°, g = 0.1·i + 2 dB.
    const cal =
      "frequency_hz,element,phase_offset_deg,gain_offset_db\n" +
      ["9.5e9", "10.5e9"].flatMap((f, j) => Array.from({ length: 16 }, (_, i) => `${f},${i},${i === 0 ? (j ? -170 : 170) : 5 * i + 40 * j},${(0.1 * i + 2 * j).toFixed(1)}`)).join("\n") + "\n";
    const doc = load(baseScenario({
      frequency: "10 GHz",
      array: { lattice: { kind: "rectangular", columns: 16, rows: 1, dx: (SPEED_OF_LIGHT / 10e9) / (4 * Math.sin(60 * DEG)), dy: "0.5 lambda" } },
      beams: { kind: "thetaphi", theta: { from: 60, to: 60, step: 1 }, phi: { from: 0, to: 0, step: 1 } },
      phaseShifter: { bits: 3 },
      calibration: "cal.csv",
      band: { from: "9.5 GHz", to: "10.5 GHz", step: "0.25 GHz" },
    }), { "cal.csv": cal });
    const plan = doc.plan;
    expect(Array.from(plan.elements.ids)).toEqual(Array.from({ length: 16 }, (_, i) => i));
    // derived by hand at 9.75 GHz, t = (9.75 − 9.5)/(10.5 − 9.5) = 1/4: element 0 goes 170° → −170° the short way
    // (+20°), so 170 + 20/4 = 175°; others 5·i + 40/4 = 5·i + 10°; gain 0.1·i + 2/4 = 0.1·i + 0.5 dB
    const mid = calibrationAt(plan, "9750000000");
    expect(mid.phaseExact[0]).toBe("175");
    expect(mid.phaseExact[3]).toBe("25");
    expect(mid.gainExact[0]).toBe("0.5");
    expect(mid.gainExact[7]).toBe("1.2");
    for (let i = 1; i < 16; i++) {
      expect(mid.phaseDeg[i]).toBeCloseTo(5 * i + 10, 12);
      expect(mid.gainDb[i]).toBeCloseTo(0.1 * i + 0.5, 12);
    }
    // at a listed frequency exactly that set (the same object the loader parsed)
    const top = calibrationAt(plan, "10500000000");
    expect(top).toBe(plan.calTable!.sets[1]);
    expect(top.phaseExact[0]).toBe("-170");
    expect(top.gainExact[7]).toBe("2.7");
    // the band analyzer plays the table's codes with those sets: the same numbers as a BeamAnalyzer
    // handed the hand-checked calibration at 9.75 GHz, and not those with the table frequency's set
    const q = makeQuantizer(plan, 0);
    const codes = allocBeamCodes(plan.elements.count);
    q.beam(0, codes);
    const out = new Float64Array(5 * SQUINT_METRICS);
    new BandAnalyzer(plan).analyse(0, codes, out, 0);
    const at = (cals: Plan["cals"]) => {
      const m = new Float64Array(SQUINT_METRICS);
      new BeamAnalyzer({ ...plan, frequenciesHz: [9.75e9], frequenciesExact: ["9750000000"], cals }, 0).analysePeak(0, codes, m, 0);
      return Array.from(m);
    };
    const byHand = at([mid]);
    const row = Array.from(out.subarray(1 * SQUINT_METRICS, 2 * SQUINT_METRICS));
    for (let j = 0; j < SQUINT_METRICS; j++) expect(row[j]).toBeCloseTo(byHand[j]!, 12);
    const wrong = at([plan.cals[0]!]);
    expect(Math.abs(row[3]! - wrong[3]!) + Math.abs(row[0]! - wrong[0]!)).toBeGreaterThan(1e-3);
  });
});

describe("instantaneous bandwidth (check)", () => {
  it("at the band edges it reports, the phase-steered beam squints by exactly half its beamwidth", () => {
    // derived: f_low = f0·sin θ0 / sin(θ0 + θ3/2), f_high = f0·sin θ0 / sin(θ0 − θ3/2); played there, the exact
    // table's peak sits θ3/2 from the commanded direction
    const plan = exactLine();
    const s = squintBandwidth(plan, 0)!;
    expect(s.thetaDeg).toBeCloseTo(60, 9);
    const [lo, hi] = play(plan, 0, [s.lowHz, s.highHz!]);
    expect(lo![2]).toBeCloseTo(s.beamwidthDeg / 2, 6);
    expect(hi![2]).toBeCloseTo(s.beamwidthDeg / 2, 6);
    expect(s.bandwidthHz).toBeCloseTo(s.highHz! - s.lowHz, 3);
    // from memory (Balanis ch. 6): uniform line, θ3 ≈ 0.886·λ/(N·d·cos θ0) — a large-N estimate; here within 10 %
    const approx = (0.886 * (SPEED_OF_LIGHT / 10e9)) / (16 * plan.lattice!.dx * Math.cos(60 * DEG)) / DEG;
    expect(Math.abs(s.beamwidthDeg - approx) / approx).toBeLessThan(0.1);
    // derived: fill time = spread of x_n·sin θ0 over the line / c = 15·dx·sin 60° / c
    expect(s.fillTimeS).toBeCloseTo((15 * plan.lattice!.dx * Math.sin(60 * DEG)) / SPEED_OF_LIGHT, 18);
  });

  it("check says when the band asks for true time delay", () => {
    const base = exactLine();
    const s = squintBandwidth(base, 0)!;
    const narrow = { ...base, band: { frequenciesHz: [s.lowHz * 1.001, s.highHz! * 0.999], frequenciesExact: ["0", "0"] } };
    const wide = { ...base, band: { frequenciesHz: [s.lowHz * 0.99, 10e9], frequenciesExact: ["0", "0"] } };
    expect(deriveFacts(narrow).perFrequency[0]!.bandNeedsTrueTimeDelay).toBe(false);
    const f = deriveFacts(wide);
    expect(f.perFrequency[0]!.bandNeedsTrueTimeDelay).toBe(true);
    expect(f.warnings.join("\n")).toMatch(/asks for true time delay/);
    expect(deriveFacts(base).perFrequency[0]!.bandNeedsTrueTimeDelay).toBeNull();
  });
});
