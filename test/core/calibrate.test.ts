/**
 * The REV equations and per-frequency calibration, checked by hand.
 */
import { describe, expect, it } from "vitest";
import { revClosedForm, revFitElement, revLinear, calibrationAt, referOffsets, pathFactor, type CalibrationTable } from "../../src/core/calibrate/index.js";
import type { Calibration } from "../../src/core/plan.js";
import { emptyElements } from "../../src/core/geometry.js";

const DEG = Math.PI / 180;
const db = (p: number) => 10 * Math.log10(p);

/** readings of codes `codes` of a `bits`-bit ideal shifter for x = e/E0, powers |1 + x(e^{jΔ} − 1)|² (K = 1) */
function readings(x: { re: number; im: number }, codes: number[], bits: number, K = 1) {
  const delta = Float64Array.from(codes, (k) => (k * 2 * Math.PI) / 2 ** bits);
  const powerDb = Float64Array.from(delta, (d) => {
    const zr = 1 + x.re * (Math.cos(d) - 1) - x.im * Math.sin(d);
    const zi = x.re * Math.sin(d) + x.im * (Math.cos(d) - 1);
    return db(K * (zr * zr + zi * zi));
  });
  return { delta, rho: new Float64Array(codes.length).fill(1), powerDb };
}

describe("REV: worked examples of the equations (derived by hand, see rev.ts)", () => {
  it("x = 0.2 (element in phase with the array), 2-bit shifter", () => {
    // derived: P(0°) = |1|² = 1, P(90°) = |0.8 + 0.2j|² = 0.68, P(180°) = 0.6² = 0.36, P(270°) = 0.68
    const r = { delta: Float64Array.from([0, 90, 180, 270], (d) => d * DEG), rho: new Float64Array(4).fill(1), powerDb: Float64Array.from([1, 0.68, 0.36, 0.68], db) };
    const l = revLinear(r)!;
    // derived: α = mean = 0.68, β = (P0 − P180)/2 = 0.32, γ = (P90 − P270)/2 = 0
    expect(l.alpha).toBeCloseTo(0.68, 12);
    expect(l.beta).toBeCloseTo(0.32, 12);
    expect(l.gamma).toBeCloseTo(0, 12);
    // derived: K = α + β = 1, R = 0.32, |a| + |b| = √((α + R)/K) = 1, |a| − |b| = √((α − R)/K) = 0.6 → |b| = 0.2, |a| = 0.8
    const cf = revClosedForm(l)!;
    expect(cf.K).toBeCloseTo(1, 12);
    expect(cf.roots[0].re).toBeCloseTo(0.2, 12);
    expect(cf.roots[0].im).toBeCloseTo(0, 12);
    // derived: the other root conj(1 − x) = 0.8
    expect(cf.roots[1].re).toBeCloseTo(0.8, 12);
  });

  it("x = 0.1j (element in quadrature), 2-bit shifter", () => {
    // derived: P(0°) = 1; P(90°) = |1 + 0.1j(j − 1)|² = |0.9 − 0.1j|² = 0.82; P(180°) = |1 − 0.2j|² = 1.04;
    // P(270°) = |1 + 0.1j(−j − 1)|² = |1.1 − 0.1j|² = 1.22
    const r = { delta: Float64Array.from([0, 90, 180, 270], (d) => d * DEG), rho: new Float64Array(4).fill(1), powerDb: Float64Array.from([1, 0.82, 1.04, 1.22], db) };
    const l = revLinear(r)!;
    // derived: α = 4.08/4 = 1.02, β = (1 − 1.04)/2 = −0.02, γ = (0.82 − 1.22)/2 = −0.2
    expect(l.alpha).toBeCloseTo(1.02, 12);
    expect(l.beta).toBeCloseTo(-0.02, 12);
    expect(l.gamma).toBeCloseTo(-0.2, 12);
    const cf = revClosedForm(l)!;
    // derived: θ = atan2(−0.2, −0.02) = −95.71°, so ∠b − ∠a = 95.71° = 90° + atan(0.1) (a = 1 − 0.1j, b = 0.1j)
    expect(cf.roots[0].re).toBeCloseTo(0, 12);
    expect(cf.roots[0].im).toBeCloseTo(0.1, 12);
    expect(cf.roots[1].re).toBeCloseTo(1, 12);
    expect(cf.roots[1].im).toBeCloseTo(0.1, 12);
    const fit = revFitElement(r);
    expect(fit.ok).toBe(true);
    if (!fit.ok) return;
    expect(fit.fit.kept).toBe(0);
    expect(fit.fit.decided).toBe(true);
    expect(fit.fit.why).toMatch(/far smaller than the whole array's/);
    expect(fit.fit.roots[0].x.im).toBeCloseTo(0.1, 10);
  });

  it("unequally spaced codes (0, 1, 3, 6 of a 3-bit shifter) and any common reference give the same x", () => {
    // derived: the model is linear in (α, β, γ) for any set of Δ, so three distinct Δ besides none suffice; K only scales
    const x = { re: -0.031, im: 0.072 };
    const fit = revFitElement(readings(x, [0, 1, 3, 6], 3, 10 ** 4.3));
    expect(fit.ok).toBe(true);
    if (!fit.ok) return;
    expect(fit.fit.roots[fit.fit.kept].x.re).toBeCloseTo(x.re, 10);
    expect(fit.fit.roots[fit.fit.kept].x.im).toBeCloseTo(x.im, 10);
    expect(fit.fit.roots[fit.fit.kept].referenceDb).toBeCloseTo(43, 9);
  });

  it("root ambiguity: both roots predict the same powers; with |x| near ½ the choice cannot be decided", () => {
    // derived: |1 + x'(e^{jΔ} − 1)| = |1 + x(e^{jΔ} − 1)| for x' = conj(1 − x) (multiply by e^{−jΔ} and conjugate)
    const r = readings({ re: 0.05, im: 0.02 }, [0, 1, 2, 3, 4, 5, 6, 7], 3);
    const f = revFitElement(r);
    if (!f.ok) throw new Error(f.message);
    expect(f.fit.roots[0].residualDb).toBeCloseTo(f.fit.roots[1].residualDb, 12);
    expect(f.fit.roots[1].x.re).toBeCloseTo(0.95, 10);
    expect(f.fit.roots[1].x.im).toBeCloseTo(0.02, 10);
    // a two-element array: each element carries half the field: |x| = |1 − x| — undecidable (derived)
    const noise = [0.01, -0.02, 0.015, 0, -0.01, 0.02, -0.015, 0.005];
    const half = readings({ re: 0.5, im: 0.03 }, [0, 1, 2, 3, 4, 5, 6, 7], 3);
    half.powerDb.forEach((p, i) => (half.powerDb[i] = p + noise[i]!));
    const h = revFitElement(half);
    if (!h.ok) throw new Error(h.message);
    expect(h.fit.decided).toBe(false);
    expect(h.fit.why).toMatch(/cannot be decided/);
  });

  it("power that does not vary, and codes that fall on fewer than three phases, have no solution", () => {
    const flat = { delta: Float64Array.from([0, 1, 2, 3], (k) => k * 90 * DEG), rho: new Float64Array(4).fill(1), powerDb: new Float64Array(4).fill(-3) };
    const a = revFitElement(flat);
    expect(a.ok).toBe(false);
    if (!a.ok) expect(a.message).toMatch(/does not vary/);
    const two = { delta: Float64Array.from([0, 180, 0, 180], (d) => d * DEG), rho: new Float64Array(4).fill(1), powerDb: Float64Array.from([0, -1, 0.001, -1]) };
    const b = revFitElement(two);
    expect(b.ok).toBe(false);
  });
});

describe("probe path and referring (interface contract, Version 2)", () => {
  it("far-field path is exp(+jk r·d̂); near-field path exp(−jk|p − r|)/|p − r|", () => {
    const k = 2 * Math.PI / 0.03;
    // derived: element at x = λ/4, probe at az 90° → phase k·λ/4 = 90°
    const h = pathFactor({ kind: "far", azDeg: 90, elDeg: 0 }, 0.0075, 0, 0, k);
    expect(h.re).toBeCloseTo(0, 12);
    expect(h.im).toBeCloseTo(1, 12);
    // derived: probe 2 m straight above an element at the origin: |h| = 1/2, phase −k·2 = −2/0.03 turns (integer + 2/3) → −240° ≡ 120°
    const n = pathFactor({ kind: "near", x: 0, y: 0, z: 2 }, 0, 0, 0, k);
    expect(Math.hypot(n.re, n.im)).toBeCloseTo(0.5, 12);
    expect(Math.atan2(n.im, n.re) / DEG).toBeCloseTo(120, 8);
  });

  it("offsets are referred to circular mean 0° and mean 0 dB over the enabled elements; dead channels are flagged", () => {
    const el = emptyElements(4);
    el.enabled.set([1, 1, 1, 0]);
    const f = (dB: number, deg: number) => ({ re: 10 ** (dB / 20) * Math.cos(deg * DEG), im: 10 ** (dB / 20) * Math.sin(deg * DEG) });
    const fields = [f(1, 10), f(-1, 50), f(-30, 30), f(0, 0)].map((field, index) => ({ index, field, residualDb: 0, relStd: 0, phaseStdRad: 0, flags: [], advice: [] }));
    const r = referOffsets(fields, { elements: el, probe: { kind: "far", azDeg: 0, elDeg: 0 }, k: 1, codeZero: () => ({ re: 1, im: 0 }) });
    // derived: circular mean of 10°, 50°, 30° is 30°; mean gain (1 − 1 − 30)/3 = −10 dB
    expect(r.commonPhaseDeg).toBeCloseTo(30, 10);
    expect(r.commonGainDb).toBeCloseTo(-10, 10);
    expect(r.offsets.map((o) => o.phaseDeg)).toEqual([expect.closeTo(-20, 10), expect.closeTo(20, 10), expect.closeTo(0, 10), expect.closeTo(-30, 10)]);
    expect(r.offsets[2]!.flags).toContain("dead");
    expect(r.offsets[2]!.advice.join()).toMatch(/array\.disabled/);
    expect(r.offsets[0]!.flags).toEqual([]);
  });
});

describe("calibration per frequency: interpolation checked by hand", () => {
  const set = (p: string[], g: string[]): Calibration => ({ phaseDeg: Float64Array.from(p.map(Number)), gainDb: Float64Array.from(g.map(Number)), phaseExact: p, gainExact: g });
  const table: CalibrationTable = {
    frequenciesExact: ["27000000000", "29000000000"],
    sets: [set(["170", "10", "0"], ["0", "-1", "0.3"]), set(["-170", "30", "180"], ["2", "-3", "0.3"])],
    lines: ["2–4", "5–7"],
  };
  it("listed frequency: its own set, not interpolated", () => {
    const r = calibrationAt(table, "29e9");
    if (!r.ok) throw new Error(r.message);
    expect(r.served.interpolated).toBe(false);
    expect(r.served.from).toEqual([{ frequencyHz: "29000000000", lines: "5–7", weight: "1" }]);
    expect(r.cal.phaseExact).toEqual(["-170", "30", "180"]);
  });
  it("between two listed frequencies: gain linear in dB, phase the shorter way round", () => {
    const r = calibrationAt(table, "27500000000");
    if (!r.ok) throw new Error(r.message);
    // derived: t = 0.25. Element 0: 170° → −170° the short way is +20°, so 175°; gain 0 → 2 dB gives 0.5 dB.
    // Element 1: 10° → 30° gives 15°, −1 → −3 dB gives −1.5 dB. Element 2: 0° → 180° (a tie: the positive way) gives 45°.
    expect(r.cal.phaseExact.map(Number)).toEqual([175, 15, 45]);
    expect(r.cal.gainExact.map(Number)).toEqual([0.5, -1.5, 0.3]);
    expect(r.served.interpolated).toBe(true);
    expect(r.served.from.map((f) => f.weight)).toEqual(["0.75", "0.25"]);
    const mid = calibrationAt(table, 28e9);
    if (!mid.ok) throw new Error(mid.message);
    // derived: midway, 170° and −170° meet at 180° (not 0°, the long way)
    expect(Math.abs(Number(mid.cal.phaseExact[0]))).toBe(180);
  });
  it("outside the listed span: refused, no extrapolation", () => {
    const r = calibrationAt(table, "29000000001");
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(/outside the calibrated span 27000000000 … 29000000000 Hz/);
  });
});

describe("library: calibrationAt on a loaded scenario", () => {
  it("listed, interpolated (by hand) and refused frequencies", async () => {
    const { writeScenario, baseScenario } = await import("../helpers.js");
    const api = await import("../../src/index.js");
    const cal = "frequency_hz,element,phase_offset_deg,gain_offset_db\n" + ["9e9", "11e9"].flatMap((f, j) => Array.from({ length: 8 }, (_, i) => `${f},${i},${j ? 170 : -170},${j ? 1 : 0}`)).join("\n") + "\n";
    const s = api.loadScenario(writeScenario(baseScenario({ calibration: "cal.csv" }), { "cal.csv": cal }));
    const r = api.calibrationAt(s, 10.5e9);
    if (!r.ok) throw new Error(r.message);
    // derived: t = 0.75 from −170° to 170° the short way (−20°): −185° ≡ 175°; gain 0 → 1 dB: 0.75 dB
    expect(((r.phaseDeg[3]! % 360) + 360) % 360).toBeCloseTo(175, 9);
    expect(r.gainDb[3]).toBeCloseTo(0.75, 12);
    expect(r.served!.interpolated).toBe(true);
    expect(api.calibrationAt(s, 12e9).ok).toBe(false);
  });
});
