import { describe, expect, it } from "vitest";
import { makeElementPattern, scanLossDb } from "../../src/core/element.js";
import { METRICS, M } from "../../src/core/pattern/analyze.js";
import { AfEvaluator } from "../../src/core/pattern/evaluator.js";
import { uvToW } from "../../src/core/geometry.js";
import { SPEED_OF_LIGHT } from "../../src/core/units.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { baseScenario, load } from "../helpers.js";
import { analyseAll } from "./engine-run.js";
import { bruteForce as bruteForceRef, bruteForceLineCut } from "./pattern-ref.js";

const DEG = Math.PI / 180;


/** element.csv sampling cos^q θ (power, dB) on a θ/φ grid; 90° is written as −300 dB (the finite floor). */
function cosineTable(q: number, thetaStep: number, phis: number[]): string {
  const lines = ["theta_deg,phi_deg,gain_db"];
  for (let t = 0; t <= 90; t += thetaStep)
    for (const p of phis) lines.push(`${t},${p},${t === 90 ? -300 : (10 * q * Math.log10(Math.cos(t * DEG))).toFixed(12)}`);
  return lines.join("\n") + "\n";
}

describe("cosine element: scan loss", () => {
  it("q = 1 loses 1.505 dB at 45° and 3.010 dB at 60°", () => {
    // derived: scan loss = −10·log10(cos^q θ) = −10·q·log10(cos θ); q = 1: 10·log10(√2) = 1.50515 dB, 10·log10(2) = 3.01030 dB
    const e = makeElementPattern({ pattern: "cosine", exponent: 1 });
    expect(scanLossDb(e, Math.sin(45 * DEG), 0)).toBeCloseTo(1.50515, 4);
    expect(scanLossDb(e, 0, Math.sin(60 * DEG))).toBeCloseTo(3.0103, 4);
    // beams.csv's scan_loss_db from the analyzer, on a θ/φ grid (θ = 45°, φ = 30°: scan loss depends on θ only)
    const L = load(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "thetaphi", theta: { from: 0, to: 60, step: 15 }, phi: { from: 30, to: 30, step: 1 } },
      element: { pattern: "cosine", exponent: 1 },
    }));
    const out = analyseAll(L.plan);
    const expected = [0, 10 * Math.log10(1 / Math.cos(15 * DEG)), 10 * Math.log10(1 / Math.cos(30 * DEG)), 1.50515, 3.0103];
    expected.forEach((x, b) => expect(out[b * METRICS + M.scan_loss_db]).toBeCloseTo(x, 4));
  });

  it("its analytic derivatives match central differences of the pattern", () => {
    // derived: E = (1 − u² − v²)^(q/2); compare with numerical differentiation
    const e = makeElementPattern({ pattern: "cosine", exponent: 1.3 });
    const o = { p: 0, pu: 0, pv: 0, puu: 0, pvv: 0, puv: 0 };
    const [u, v, h] = [0.41, -0.27, 1e-5];
    e.derivs(u, v, o);
    const P = (a: number, b: number) => e.power(a, b);
    expect(o.p).toBeCloseTo(P(u, v), 14);
    expect(o.pu).toBeCloseTo((P(u + h, v) - P(u - h, v)) / (2 * h), 7);
    expect(o.pv).toBeCloseTo((P(u, v + h) - P(u, v - h)) / (2 * h), 7);
    expect(o.puu).toBeCloseTo((P(u + h, v) - 2 * P(u, v) + P(u - h, v)) / (h * h), 3);
    expect(o.puv).toBeCloseTo((P(u + h, v + h) - P(u + h, v - h) - P(u - h, v + h) + P(u - h, v - h)) / (4 * h * h), 3);
    expect(e.power(0.8, 0.7)).toBe(0); // below the horizon: nothing
  });
});

describe("total pattern in the evaluator", () => {
  it("power and derivatives are those of |AF|²·E (product rule), so refinement is exact for the total pattern", () => {
    // derived: d(A·E) = A'·E + A·E'; checked against central differences of the total power
    const L = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 5, rows: 3, dx: "0.5 lambda", dy: "0.6 lambda" } }, element: { pattern: "cosine", exponent: 1.5 } }));
    const el = L.plan.elements;
    const ev = new AfEvaluator(el.x, el.y, el.z, (2 * Math.PI * 10e9) / SPEED_OF_LIGHT);
    const r = mulberry32(3);
    for (let i = 0; i < el.count; i++) { ev.wr[i] = r(); ev.wi[i] = r() - 0.5; }
    ev.element = makeElementPattern({ pattern: "cosine", exponent: 1.5 });
    ev.setBeam(0.3, 0.2, uvToW(0.3, 0.2));
    const [du, dv, h] = [0.05, -0.04, 1e-5];
    const d = { ...ev.derivs(du, dv) };
    const P = (a: number, b: number) => ev.power(a, b);
    expect(d.p).toBeCloseTo(P(du, dv), 10);
    expect(d.pu / d.p).toBeCloseTo((P(du + h, dv) - P(du - h, dv)) / (2 * h) / d.p, 5);
    expect(d.pv / d.p).toBeCloseTo((P(du, dv + h) - P(du, dv - h)) / (2 * h) / d.p, 5);
    expect(d.puu / d.p).toBeCloseTo((P(du + h, dv) - 2 * P(du, dv) + P(du - h, dv)) / (h * h) / d.p, 2);
    expect(d.pvv / d.p).toBeCloseTo((P(du, dv + h) - 2 * P(du, dv) + P(du, dv - h)) / (h * h) / d.p, 2);
  });
});

describe("measured element table", () => {
  const scen = (element: unknown) => baseScenario({
    array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams: { kind: "thetaphi", theta: { from: 0, to: 60, step: 20 }, phi: { from: 0, to: 90, step: 30 } },
    taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
    phaseShifter: { bits: 4 },
    element,
  });
  it("a table sampling cos^q θ gives the formula's metrics (symmetric and with φ columns)", () => {
    // derived: cubic interpolation of 10q·log10(cos θ) on a 1° grid is within ~1e-5 dB of the formula up to 60°,
    // and its slope within ~h²·|g‴|/6 ≈ 4e-4 (relative) of the formula's; the element pulls a 60° beam of this
    // small array ~6° toward boresight, so pointing agrees to ~6°·4e-4 ≈ 0.002° at most (measured: 0.0008°)
    const q = 1.2;
    const ref = analyseAll(load(scen({ pattern: "cosine", exponent: q })).plan);
    for (const phis of [[0], [0, 90, 180, 270, 360]]) {
      const tab = analyseAll(load(scen({ pattern: "table", file: "element.csv" }), { "element.csv": cosineTable(q, 1, phis) }).plan);
      for (let b = 0; b < ref.length / METRICS; b++) {
        const o = b * METRICS;
        expect(Math.abs(tab[o + M.scan_loss_db]! - ref[o + M.scan_loss_db]!), `beam ${b} scan loss`).toBeLessThan(1e-4);
        expect(Math.abs(tab[o + M.psl_db]! - ref[o + M.psl_db]!), `beam ${b} psl`).toBeLessThan(0.005);
        expect(Math.abs(tab[o + M.psl_ideal_db]! - ref[o + M.psl_ideal_db]!), `beam ${b} ideal psl`).toBeLessThan(0.005);
        expect(Math.abs(tab[o + M.pointing_error_deg]! - ref[o + M.pointing_error_deg]!), `beam ${b} pointing`).toBeLessThan(1e-3);
        expect(tab[o + M.gain_loss_db]).toBeCloseTo(ref[o + M.gain_loss_db]!, 9);
      }
    }
  });
  it("interpolation passes through the table, reproduces a quadratic in θ and wraps φ continuously", () => {
    // derived: a cubic Hermite with parabola slopes is exact for quadratics; by hand:
    // g(θ) = −2 − 0.01·θ − 0.001·θ² at θ = 37.5° is −2 − 0.375 − 1.40625 = −3.78125 dB
    const thetas = [0, 10, 25, 45, 70, 90];
    const g = (t: number) => -2 - 0.01 * t - 0.001 * t * t;
    const e = makeElementPattern({ pattern: "table", thetaDeg: Float64Array.from(thetas), phiDeg: Float64Array.from([0]), gainDb: Float64Array.from(thetas, g) });
    const dB = (th: number, ph: number) => 10 * Math.log10(e.power(Math.sin(th * DEG) * Math.cos(ph * DEG), Math.sin(th * DEG) * Math.sin(ph * DEG)));
    expect(dB(37.5, 123)).toBeCloseTo(-3.78125, 9);
    for (const t of [3, 17, 60, 88]) expect(dB(t, 0)).toBeCloseTo(g(t), 9);
    // φ columns: knots are hit exactly, and φ → 360° meets φ = 0°
    const phis = [0, 90, 180, 270];
    const gain = Float64Array.from({ length: thetas.length * 4 }, (_, k) => -((k * 7) % 11));
    const t = makeElementPattern({ pattern: "table", thetaDeg: Float64Array.from(thetas), phiDeg: Float64Array.from(phis), gainDb: gain });
    const tdB = (th: number, ph: number) => 10 * Math.log10(t.power(Math.sin(th * DEG) * Math.cos(ph * DEG), Math.sin(th * DEG) * Math.sin(ph * DEG)));
    expect(tdB(25, 180)).toBeCloseTo(gain[2 * 4 + 2]!, 9);
    expect(tdB(45, 90)).toBeCloseTo(gain[3 * 4 + 1]!, 9);
    expect(Math.abs(tdB(45, 359.9999) - tdB(45, 0.0001))).toBeLessThan(1e-3);
  });
  it("on the horizon computed in doubles (cos α, sin α; u0 + Δu) it gives the table's 90° row (cos^0: 1), never 0", () => {
    // the table itself: gain_db at θ = 90° is −3 dB (one φ column); a point of the horizon whose
    // u² + v² rounds a hair past 1 had been given 0 (about a fifth of the trace's samples)
    const e = makeElementPattern({ pattern: "table", thetaDeg: Float64Array.from([0, 45, 90]), phiDeg: Float64Array.from([0]), gainDb: Float64Array.from([0, -1, -3]) });
    const u0 = 0.3, v0 = 0.2;
    for (let i = 0; i < 1000; i++) {
      const a = (2 * Math.PI * i) / 1000;
      expect(10 * Math.log10(e.power(Math.cos(a), Math.sin(a)))).toBeCloseTo(-3, 5);
      const du = Math.cos(a) - u0, dv = Math.sin(a) - v0;
      expect(10 * Math.log10(e.power(u0 + du, v0 + dv))).toBeCloseTo(-3, 5);
    }
    // past the horizon: nothing radiates
    expect(e.power(1.001, 0)).toBe(0);
    // the formula: cos^0 θ = 1 up to and on the horizon
    const c0 = makeElementPattern({ pattern: "cosine", exponent: 0 });
    for (let i = 0; i < 1000; i++) {
      const a = (2 * Math.PI * i) / 1000;
      expect(c0.power(u0 + (Math.cos(a) - u0), v0 + (Math.sin(a) - v0))).toBe(1);
    }
    expect(c0.power(1.001, 0)).toBe(0);
  });
  it("cos^q θ, q > 0, is 0 on the horizon computed in doubles, not the rounding's power (1e-16^3.4 = 1e-54), and not 0 just inside", () => {
    // derived: cos θ = w = 0 on the horizon, so cos^q θ = 0 for q > 0; a point computed on the
    // circle has 1 − u² − v² within a few roundings of 0 either side
    const e = makeElementPattern({ pattern: "cosine", exponent: 6.71 });
    const o = { p: 1, pu: 1, pv: 1, puu: 1, pvv: 1, puv: 1 };
    const u0 = 0.33629964564365206, v0 = -0.03988547960205662;
    let inside = 0;
    for (let i = 0; i < 4096; i++) {
      const a = (2 * Math.PI * i) / 4096;
      const u = u0 + (Math.cos(a) - u0), v = v0 + (Math.sin(a) - v0);
      if (1 - u * u - v * v > 0) inside++;
      expect(e.power(u, v)).toBe(0);
      expect(e.power(Math.cos(a), Math.sin(a))).toBe(0);
      e.derivs(u, v, o);
      expect([o.p, o.pu, o.pv, o.puu, o.pvv, o.puv]).toEqual([0, 0, 0, 0, 0, 0]);
    }
    // the rounding lands inside the circle for some of them (each had been given t^3.355)
    expect(inside).toBeGreaterThan(100);
    // θ = 89.99° (w = 1.745e-4): cos^6.71 θ = 10^(6.71·log10(1.745e-4)) = −252.6 dB, still there
    const w = Math.cos(89.99 * DEG);
    expect(10 * Math.log10(e.power(Math.sqrt(1 - w * w), 0))).toBeCloseTo(67.1 * Math.log10(w), 6);
  });
});

describe("PSL with the element pattern against a brute-force direct sum", () => {
  it("8×6 lattice at 0.5 λ, 2 bits, beams to az −60°: with a measured element that keeps gain at the horizon, PSL with horizon lobes within 0.01 dB of brute force", () => {
    // source: our own dense brute force (test/core/pattern-ref.ts) of |AF|²·E with E the
    // engine's interpolated table; the table's interpolation is checked on its own above.
    const rows = ["theta_deg,phi_deg,gain_db"];
    for (let t = 0; t <= 90; t += 10) for (let p = 0; p < 360; p += 30) rows.push(`${t},${p},${(-6 * (t / 90) ** 2 - 0.5 * Math.cos((p * Math.PI) / 180) * (t / 90)).toFixed(4)}`);
    const L = load(baseScenario({
      frequency: "30 GHz",
      array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "azel", az: { from: -60, to: 0, step: 30 }, el: { from: 0, to: 0, step: 1 } },
      phaseShifter: { bits: 2 },
      element: { pattern: "table", file: "element.csv" },
    }), { "element.csv": rows.join("\n") + "\n" });
    const plan = L.plan;
    const ep = makeElementPattern(plan.element!);
    const out = analyseAll(plan);
    for (let b = 0; b < plan.beams.count; b++) {
      const ref = bruteForceRef(plan, b, "realized", 0, 401, (u, v) => ep.power(u, v));
      expect(Math.abs(out[b * METRICS + M.psl_db]! - ref.pslDb), `beam ${b} psl`).toBeLessThan(0.01);
      expect(Math.abs(out[b * METRICS + M.pointing_error_deg]! - ref.pointingDeg), `beam ${b} pointing`).toBeLessThan(0.001);
    }
  });

  it("5×4 lattice, cos^1.5, 3 bits with calibration: PSL within 0.05 dB, pointing within 0.001°", () => {
    const q = 1.5;
    const r = mulberry32(11);
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 20 }, (_, i) => `${i},${(r() * 360).toFixed(3)},${((r() - 0.5) * 2).toFixed(3)}`).join("\n") + "\n";
    const L = load(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 5, rows: 4, dx: "0.5 lambda", dy: "0.55 lambda" } },
      beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.6 }, v: { from: 0, to: 0.5, step: 0.5 } },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
      calibration: "cal.csv",
      element: { pattern: "cosine", exponent: q },
    }), { "cal.csv": cal });
    const plan = L.plan;
    const out = analyseAll(plan);
    for (let b = 0; b < plan.beams.count; b++) {
      // the shared brute force (pattern-ref.ts) with the element power cos^q θ = (1 − u² − v²)^(q/2) (derived)
      const ref = bruteForceRef(plan, b, "realized", 0, 401, (u, v) => Math.pow(Math.max(0, 1 - u * u - v * v), q / 2));
      expect(Math.abs(out[b * METRICS + M.psl_db]! - ref.pslDb), `beam ${b} psl`).toBeLessThan(0.05);
      expect(Math.abs(out[b * METRICS + M.pointing_error_deg]! - ref.pointingDeg), `beam ${b} pointing`).toBeLessThan(0.001);
    }
  });
});


describe("line arrays with an element pattern (README: every metric on the cut through the commanded direction)", () => {
  const cases: { name: string; lattice: Record<string, unknown>; beams: string; q: number }[] = [
    { name: "8×1 row at λ/2, cos^1.5, 4 bits", lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" }, beams: "az_deg,el_deg\n80,0\n89.9,0\n0,85\n45,44\n-60,29.5\n20,50\n", q: 1.5 },
    { name: "1×6 column at 0.6 λ, cos^3, 3 bits", lattice: { kind: "rectangular", columns: 1, rows: 6, dx: "0.5 lambda", dy: "0.6 lambda" }, beams: "az_deg,el_deg\n0,80\n0,89\n85,0\n45,44\n-60,29.5\n30,-20\n", q: 3 },
  ];
  for (const c of cases) {
    it(`${c.name}: PSL within 0.05 dB and pointing within 0.001° of a 1-D brute force on the cut`, () => {
      const L = load(baseScenario({ array: { lattice: c.lattice }, beams: { kind: "list", file: "b.csv" }, phaseShifter: { bits: c.name.includes("4 bits") ? 4 : 3 }, element: { pattern: "cosine", exponent: c.q } }), { "b.csv": c.beams });
      const plan = L.plan;
      const out = analyseAll(plan);
      let sidelobes = 0;
      for (let b = 0; b < plan.beams.count; b++) {
        // cos^q θ = (1 − u² − v²)^(q/2) (derived); on the horizon 0
        const ref = bruteForceLineCut(plan, b, (u, v) => Math.pow(Math.max(0, 1 - u * u - v * v), c.q / 2), 0);
        const psl = out[b * METRICS + M.psl_db]!;
        if (Number.isNaN(ref.pslDb)) expect(psl, `beam ${b}: no sidelobe`).toBeNaN();
        else { sidelobes++; expect(Math.abs(psl - ref.pslDb), `beam ${b} psl`).toBeLessThan(0.05); }
        expect(Math.abs(out[b * METRICS + M.pointing_error_deg]! - ref.pointingDeg), `beam ${b} pointing`).toBeLessThan(0.001);
      }
      expect(sidelobes).toBeGreaterThan(2);
    });
  }
});
