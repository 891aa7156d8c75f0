import { describe, expect, it } from "vitest";
import { BeamAnalyzer, METRICS, M } from "../../src/core/pattern/analyze.js";
import { AfEvaluator } from "../../src/core/pattern/evaluator.js";
import { refine } from "../../src/core/pattern/lobes.js";
import { allocBeamCodes, makeQuantizer, prepareFrequency } from "../../src/core/quantize/index.js";
import { phaseQuantGainLossDb } from "../../src/core/theory.js";
import { angleBetweenDeg, uvToW } from "../../src/core/geometry.js";
import type { Plan } from "../../src/core/plan.js";
import { SPEED_OF_LIGHT } from "../../src/core/units.js";
import { baseScenario, load } from "../helpers.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";

function analyseAll(plan: Plan, fi = 0): Float64Array {
  const an = new BeamAnalyzer(plan, fi);
  const q = makeQuantizer(plan, fi, an.prep);
  const c = allocBeamCodes(plan.elements.count);
  const out = new Float64Array(plan.beams.count * METRICS);
  for (let b = 0; b < plan.beams.count; b++) {
    q.beam(b, c);
    an.analyse(b, c, out, b * METRICS);
  }
  return out;
}

/**
 * Brute-force reference, independent of the engine: realized weights straight from the
 * channel model formula, |AF|² by direct summation on a dense u-v grid, main lobe by a
 * monotone flood from the peak nearest the commanded direction, then zoomed dense grids
 * (no derivatives, no FFT) around the peak and the top sidelobe.
 */
function bruteForce(plan: Plan, b: number, which: "realized" | "ideal" = "realized") {
  const el = plan.elements;
  const prep = prepareFrequency(plan, 0);
  const q = makeQuantizer(plan, 0, prep);
  const codes = allocBeamCodes(el.count);
  q.beam(b, codes);
  const k = (2 * Math.PI * plan.frequenciesHz[0]!) / SPEED_OF_LIGHT;
  const lsb = 360 / 2 ** plan.phaseBits;
  const wr: number[] = [], wi: number[] = [];
  for (let i = 0; i < el.count; i++) {
    let amp: number, ph: number;
    if (which === "realized") {
      amp = el.enabled[i] ? Math.pow(10, (plan.cals[0]!.gainDb[i]! - codes.attenCode[i]! * plan.attenStepDb) / 20) : 0;
      ph = ((plan.cals[0]!.phaseDeg[i]! + codes.phaseCode[i]! * lsb) * Math.PI) / 180;
    } else {
      // ideal: a_n·exp(jφ_n), φ_n = −k r_n·d̂ (interface contract)
      amp = el.enabled[i] ? plan.amplitude[i]! : 0;
      ph = -k * (el.x[i]! * plan.beams.u[b]! + el.y[i]! * plan.beams.v[b]!);
    }
    wr.push(amp * Math.cos(ph));
    wi.push(amp * Math.sin(ph));
  }
  const P = (u: number, v: number) => {
    let re = 0, im = 0;
    for (let i = 0; i < el.count; i++) {
      const a = k * (el.x[i]! * u + el.y[i]! * v);
      const c = Math.cos(a), s = Math.sin(a);
      re += wr[i]! * c - wi[i]! * s;
      im += wr[i]! * s + wi[i]! * c;
    }
    return re * re + im * im;
  };
  return denseReference(P, plan.beams.u[b]!, plan.beams.v[b]!, 401);
}

/**
 * The reference metrics of a pattern P(u, v) = |AF|²: a dense u-v grid over the disc, the
 * peak nearest (u0, v0) by hill-climbing, the main lobe by a monotone flood, then zoomed
 * dense grids (no derivatives, no FFT) around the peak and the top sidelobe.
 */
function denseReference(P: (u: number, v: number) => number, u0: number, v0: number, G: number) {
  const h = 2 / (G - 1);
  const grid = new Float64Array(G * G);
  for (let j = 0; j < G; j++) for (let i = 0; i < G; i++) grid[j * G + i] = P(-1 + i * h, -1 + j * h);
  const vis = (i: number, j: number) => (-1 + i * h) ** 2 + (-1 + j * h) ** 2 <= 1;
  let ci = Math.round((u0 + 1) / h), cj = Math.round((v0 + 1) / h);
  for (;;) {
    let bi = ci, bj = cj;
    for (let dj = -1; dj <= 1; dj++) for (let di = -1; di <= 1; di++) {
      const a = ci + di, c = cj + dj;
      if (a >= 0 && c >= 0 && a < G && c < G && grid[c * G + a]! > grid[bj * G + bi]!) { bi = a; bj = c; }
    }
    if (bi === ci && bj === cj) break;
    ci = bi; cj = bj;
  }
  const main = new Uint8Array(G * G);
  const stack = [cj * G + ci];
  main[cj * G + ci] = 1;
  while (stack.length) {
    const c = stack.pop()!;
    const x = c % G, y = (c - x) / G;
    for (let dj = -1; dj <= 1; dj++) for (let di = -1; di <= 1; di++) {
      const a = x + di, d = y + dj;
      if (a < 0 || d < 0 || a >= G || d >= G) continue;
      const qq = d * G + a;
      if (!main[qq] && grid[qq]! <= grid[c]!) { main[qq] = 1; stack.push(qq); }
    }
  }
  let si = -1, sv = -Infinity;
  for (let j = 0; j < G; j++) for (let i = 0; i < G; i++) if (vis(i, j) && !main[j * G + i] && grid[j * G + i]! > sv) { sv = grid[j * G + i]!; si = j * G + i; }
  const zoom = (u: number, v: number, span: number, inDisc: boolean) => {
    let bu = u, bv = v, bp = P(u, v);
    for (let level = 0; level < 7; level++) {
      const n = 20;
      let nu = bu, nv = bv, np = bp;
      for (let j = -n; j <= n; j++) for (let i = -n; i <= n; i++) {
        const uu = bu + (i * span) / n, vv = bv + (j * span) / n;
        if (inDisc && uu * uu + vv * vv > 1) continue;
        const p = P(uu, vv);
        if (p > np) { np = p; nu = uu; nv = vv; }
      }
      bu = nu; bv = nv; bp = np;
      span /= 8;
    }
    return { u: bu, v: bv, p: bp };
  };
  const pk = zoom(-1 + ci * h, -1 + cj * h, 2 * h, false);
  const sl = zoom(-1 + (si % G) * h, -1 + Math.floor(si / G) * h, 2 * h, true);
  return {
    pslDb: 10 * Math.log10(sl.p / pk.p),
    pointingDeg: angleBetweenDeg({ u: u0, v: v0, w: uvToW(u0, v0) }, { u: pk.u, v: pk.v, w: uvToW(pk.u, pk.v) }),
  };
}

describe("pattern engine against a brute-force direct sum", () => {
  const cal = (n: number, seed: number) => {
    const r = mulberry32(seed);
    return "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(r() * 360).toFixed(3)},${((r() - 0.5) * 2).toFixed(3)}`).join("\n") + "\n";
  };
  const cases = [
    { name: "6×5 rectangular, Taylor −25 dB, 3 bits, calibration", lattice: { kind: "rectangular", columns: 6, rows: 5, dx: "0.5 lambda", dy: "0.55 lambda" }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, bits: 3 },
    { name: "7×6 triangular, Chebyshev −30 dB, 4 bits, calibration", lattice: { kind: "triangular", columns: 7, rows: 6, dx: "0.6 lambda", dy: "0.5 lambda", offset: 0.5 }, taper: { kind: "chebyshev", sidelobe: "-30 dB" }, bits: 4 },
    { name: "8×4 rectangular at 0.7 λ (grating lobes at wide scan), uniform, 2 bits", lattice: { kind: "rectangular", columns: 8, rows: 4, dx: "0.7 lambda", dy: "0.5 lambda" }, taper: { kind: "uniform" }, bits: 2 },
  ];
  for (const c of cases) {
    it(`${c.name}: PSL within 0.05 dB, pointing within 0.001°`, () => {
      const n = (c.lattice.columns as number) * (c.lattice.rows as number);
      const L = load(baseScenario({
        array: { lattice: c.lattice },
        taper: c.taper,
        phaseShifter: { bits: c.bits },
        calibration: "cal.csv",
        beams: { kind: "azel", az: { from: -50, to: 50, step: 25 }, el: { from: -20, to: 20, step: 20 } },
      }), { "cal.csv": cal(n, n) });
      const out = analyseAll(L.plan);
      for (let b = 0; b < L.plan.beams.count; b++) {
        const ref = bruteForce(L.plan, b);
        if (process.env.DEBUG_PSL) console.log(b, out[b * METRICS + M.psl_db], ref.pslDb, out[b * METRICS + M.pointing_error_deg], ref.pointingDeg);
        expect(Math.abs(out[b * METRICS + M.psl_db]! - ref.pslDb), `beam ${b} psl`).toBeLessThan(0.05);
        expect(Math.abs(out[b * METRICS + M.pointing_error_deg]! - ref.pointingDeg), `beam ${b} pointing`).toBeLessThan(0.001);
        const refI = bruteForce(L.plan, b, "ideal");
        expect(Math.abs(out[b * METRICS + M.psl_ideal_db]! - refI.pslDb), `beam ${b} ideal psl`).toBeLessThan(0.05);
      }
    });
  }

  it("an element list gives the same metrics as the equivalent lattice", () => {
    const csv = "element,x_m,y_m\n" + Array.from({ length: 20 }, (_, i) => `${i},${(((i % 5) - 2) * 0.016).toFixed(4)},${((Math.floor(i / 5) - 1.5) * 0.015).toFixed(4)}`).join("\n") + "\n";
    const beams = { kind: "azel", az: { from: -30, to: 30, step: 30 }, el: { from: 0, to: 20, step: 20 } };
    const A = load(baseScenario({ array: { elements: "el.csv" }, beams, phaseShifter: { bits: 3 } }), { "el.csv": csv });
    const B = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 5, rows: 4, dx: "16 mm", dy: "15 mm" } }, beams, phaseShifter: { bits: 3 } }));
    const a = analyseAll(A.plan), b = analyseAll(B.plan);
    for (let i = 0; i < A.plan.beams.count; i++) {
      expect(Math.abs(a[i * METRICS + M.psl_db]! - b[i * METRICS + M.psl_db]!)).toBeLessThan(0.05);
      expect(Math.abs(a[i * METRICS + M.pointing_error_deg]! - b[i * METRICS + M.pointing_error_deg]!)).toBeLessThan(1e-4);
      expect(a[i * METRICS + M.gain_loss_db]).toBeCloseTo(b[i * METRICS + M.gain_loss_db]!, 9);
    }
  });
});

describe("uniform line arrays (Balanis, Antenna Theory, ch. 6)", () => {
  /** Exact finite-N first sidelobe of |sin(Nψ/2)/(N sin(ψ/2))|, located numerically. */
  function firstSidelobeDb(N: number): number {
    let best = 0;
    for (let i = 1; i <= 200000; i++) {
      const psi = (2 * Math.PI / N) * (1 + (i / 200000) * 1.0); // between the first and second null
      const f = Math.abs(Math.sin((N * psi) / 2) / (N * Math.sin(psi / 2)));
      best = Math.max(best, f);
    }
    return 20 * Math.log10(best);
  }
  for (const N of [16, 32, 64]) {
    it(`N = ${N}: broadside PSL equals the finite-N first sidelobe (→ −13.26 dB as N grows)`, () => {
      const L = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: N, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "uv", u: { from: 0, to: 0, step: 1 }, v: { from: 0, to: 0, step: 1 } }, phaseShifter: { bits: 6 } }));
      const out = analyseAll(L.plan);
      expect(out[M.psl_ideal_db]).toBeCloseTo(firstSidelobeDb(N), 2);
      expect(Math.abs(out[M.psl_ideal_db]! - -13.26)).toBeLessThan(0.15);
    });
  }

  it("a Dolph–Chebyshev line array's engine PSL sits at its design level (Dolph, Proc. IRE 34, 1946)", () => {
    for (const [N, sll] of [[16, -30], [25, -40]] as const) {
      const L = load(baseScenario({
        array: { lattice: { kind: "rectangular", columns: N, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
        taper: { kind: "chebyshev", sidelobe: `${sll} dB` },
        beams: { kind: "uv", u: { from: -0.4, to: 0.4, step: 0.2 }, v: { from: 0, to: 0, step: 1 } },
        phaseShifter: { bits: 6 },
      }));
      const out = analyseAll(L.plan);
      for (let b = 0; b < L.plan.beams.count; b++) expect(Math.abs(out[b * METRICS + M.psl_ideal_db]! - sll)).toBeLessThan(0.05);
    }
  });

  it("first-null beamwidth 2·asin(λ/(N·d)) and half-power beamwidth ≈ 0.886·λ/(N·d) (from memory) on the exact pattern", () => {
    const N = 32;
    const k = 2 * Math.PI; // λ = 1
    const x = Float64Array.from({ length: N }, (_, i) => (i - (N - 1) / 2) * 0.5);
    const ev = new AfEvaluator(x, new Float64Array(N), new Float64Array(N), k);
    ev.wr.fill(1);
    const p0 = ev.power(0, 0);
    const bisect = (f: (u: number) => number, lo: number, hi: number) => {
      for (let i = 0; i < 100; i++) { const m = (lo + hi) / 2; if (f(m) > 0) lo = m; else hi = m; }
      return (lo + hi) / 2;
    };
    const uHalf = bisect((u) => ev.power(u, 0) - p0 / 2, 0, 1 / (N * 0.5));
    const hpbw = 2 * Math.asin(uHalf);
    expect(hpbw / (0.886 / (N * 0.5))).toBeCloseTo(1, 2);
    // first null: the power falls to ~0 at u = λ/(N·d)
    const uNull = 1 / (N * 0.5);
    expect(ev.power(uNull, 0) / p0).toBeLessThan(1e-20);
    expect(2 * Math.asin(uNull)).toBeCloseTo(2 * Math.asin(1 / (N * 0.5)), 12);
  });
});

describe("quantisation statistics over a calibrated grid", () => {
  it("3 bits, calibration spread over 360°: rms phase error ≈ LSB/√12 (3%) and median gain loss ≈ sinc² (0.03 dB)", () => {
    // common practice: spread insertion phases decorrelate rounding errors; Mailloux ch. 7 (from memory) for the sinc² loss
    const r = mulberry32(99);
    const n = 24 * 24;
    const csv = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(r() * 360).toFixed(4)},0`).join("\n") + "\n";
    const L = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 24, rows: 24, dx: "0.5 lambda", dy: "0.5 lambda" } }, calibration: "cal.csv", beams: { kind: "azel", az: { from: -40, to: 40, step: 20 }, el: { from: -20, to: 20, step: 20 } } }), { "cal.csv": csv });
    const out = analyseAll(L.plan);
    const nb = L.plan.beams.count;
    let ms = 0;
    const gl: number[] = [];
    for (let b = 0; b < nb; b++) { ms += out[b * METRICS + M.rms_phase_error_deg]! ** 2; gl.push(out[b * METRICS + M.gain_loss_db]!); }
    const rms = Math.sqrt(ms / nb);
    expect(Math.abs(rms / (45 / Math.sqrt(12)) - 1)).toBeLessThan(0.03);
    gl.sort((a, b) => a - b);
    expect(Math.abs(gl[Math.floor(nb / 2)]! - phaseQuantGainLossDb(3))).toBeLessThan(0.03);
    expect(phaseQuantGainLossDb(3)).toBeCloseTo(0.224, 3); // references.md: 3 bits ≈ 0.224 dB
    expect(phaseQuantGainLossDb(4)).toBeCloseTo(0.056, 3);
  });
});

describe("pointing from random phase errors", () => {
  it("variance of the beam direction ≈ 12σ²/(N(N²−1)) in ψ = k·d·u (Hansen, Phased Array Antennas; from memory), by simulation", () => {
    const N = 24;
    const sigma = 0.2; // rad
    const k = 2 * Math.PI;
    const d = 0.5;
    const x = Float64Array.from({ length: N }, (_, i) => (i - (N - 1) / 2) * d);
    const ev = new AfEvaluator(x, new Float64Array(N), new Float64Array(N), k);
    const r = mulberry32(5);
    const gauss = () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
    const trials = 1500;
    let s2 = 0;
    for (let t = 0; t < trials; t++) {
      for (let i = 0; i < N; i++) { const e = sigma * gauss(); ev.wr[i] = Math.cos(e); ev.wi[i] = Math.sin(e); }
      const p = refine(ev, 0, 0, 1 / (4 * N * d), 1, null);
      s2 += (k * d * p.du) ** 2;
    }
    const measured = s2 / trials;
    const theory = (12 * sigma * sigma) / (N * (N * N - 1));
    expect(measured / theory).toBeGreaterThan(0.85);
    expect(measured / theory).toBeLessThan(1.15);
  });
});

describe("non-planar element lists (z ≠ 0)", () => {
  it("agree with a brute-force 3-D direct sum: PSL within 0.05 dB, pointing within 0.001°", () => {
    // a gently curved 5 × 4 panel (invented): z = 0.25 λ·(r/R)², λ = 30 mm at 10 GHz
    const lambda = 299792458 / 10e9;
    const rows: string[] = [];
    for (let j = 0; j < 4; j++)
      for (let i = 0; i < 5; i++) {
        const x = (i - 2) * 0.5 * lambda, y = (j - 1.5) * 0.5 * lambda;
        const z = 0.25 * lambda * ((x * x + y * y) / (1.25 * lambda) ** 2);
        rows.push(`${j * 5 + i},${x.toFixed(6)},${y.toFixed(6)},${z.toFixed(6)}`);
      }
    const L = load(baseScenario({
      array: { elements: "el.csv" },
      beams: { kind: "azel", az: { from: -40, to: 40, step: 40 }, el: { from: 0, to: 20, step: 20 } },
      phaseShifter: { bits: 3 },
    }), { "el.csv": "element,x_m,y_m,z_m\n" + rows.join("\n") + "\n" });
    const plan = L.plan;
    const out = analyseAll(plan);
    const el = plan.elements;
    const k = (2 * Math.PI) / lambda;
    const lsb = 45;
    const q = makeQuantizer(plan, 0);
    const codes = allocBeamCodes(el.count);
    for (let b = 0; b < plan.beams.count; b++) {
      q.beam(b, codes);
      const wr = Array.from({ length: el.count }, (_, i) => Math.cos((codes.phaseCode[i]! * lsb * Math.PI) / 180));
      const wi = Array.from({ length: el.count }, (_, i) => Math.sin((codes.phaseCode[i]! * lsb * Math.PI) / 180));
      const P = (u: number, v: number) => {
        const w = Math.sqrt(Math.max(0, 1 - u * u - v * v));
        let re = 0, im = 0;
        for (let i = 0; i < el.count; i++) {
          const a = k * (el.x[i]! * u + el.y[i]! * v + el.z[i]! * w);
          re += wr[i]! * Math.cos(a) - wi[i]! * Math.sin(a);
          im += wr[i]! * Math.sin(a) + wi[i]! * Math.cos(a);
        }
        return re * re + im * im;
      };
      // P is 0 past the horizon (w = 0 there is not a real direction): the reference never picks it
      const ref = denseReference((u, v) => (u * u + v * v <= 1 ? P(u, v) : 0), plan.beams.u[b]!, plan.beams.v[b]!, 321);
      expect(Math.abs(out[b * METRICS + M.psl_db]! - ref.pslDb), `beam ${b} psl`).toBeLessThan(0.05);
      expect(Math.abs(out[b * METRICS + M.pointing_error_deg]! - ref.pointingDeg), `beam ${b} pointing`).toBeLessThan(0.001);
    }
  });
});
