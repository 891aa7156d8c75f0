/**
 * Our own brute-force reference for the pattern metrics (derived: direct summation of
 * the array factor formula on dense grids; no FFT, no derivatives, no code shared with
 * the engine beyond the quantizer that makes the codes). Used by pattern.test.ts.
 */
import { allocBeamCodes, makeQuantizer, prepareFrequency } from "../../src/core/quantize/index.js";
import { angleBetweenDeg, uvToW } from "../../src/core/geometry.js";
import type { Plan } from "../../src/core/plan.js";
import { SPEED_OF_LIGHT } from "../../src/core/units.js";

/**
 * Brute-force reference, independent of the engine: realized weights straight from the
 * channel model formula, |AF|² by direct summation on a dense u-v grid, main lobe by a
 * monotone flood from the peak nearest the commanded direction, then zoomed dense grids
 * (no derivatives, no FFT) around the peak and the top sidelobe.
 */
/** `elementPower`: multiply |AF|² by this power pattern (taken at the horizon point radially inward past it). */
/**
 * Element i's realized weight for beam b at frequency fi, straight from the channel model
 * (calibration gain and phase plus the codes' attenuation and phase): [amplitude, phase rad].
 */
function realizedWeights(plan: Plan, b: number, fi: number): (i: number) => [number, number] {
  const el = plan.elements;
  const q = makeQuantizer(plan, fi, prepareFrequency(plan, fi));
  const codes = allocBeamCodes(el.count);
  q.beam(b, codes);
  const lsb = 360 / 2 ** plan.phaseBits;
  return (i) => [
    el.enabled[i] ? Math.pow(10, (plan.cals[fi]!.gainDb[i]! - codes.attenCode[i]! * plan.attenStepDb) / 20) : 0,
    ((plan.cals[fi]!.phaseDeg[i]! + codes.phaseCode[i]! * lsb) * Math.PI) / 180,
  ];
}

export function bruteForce(plan: Plan, b: number, which: "realized" | "ideal" = "realized", fi = 0, G = 401, elementPower?: (u: number, v: number) => number) {
  const el = plan.elements;
  const realized = realizedWeights(plan, b, fi);
  const k = (2 * Math.PI * plan.frequenciesHz[fi]!) / SPEED_OF_LIGHT;
  const planar = el.z.every((z) => z === 0);
  const wr: number[] = [], wi: number[] = [];
  for (let i = 0; i < el.count; i++) {
    let amp: number, ph: number;
    if (which === "realized") {
      [amp, ph] = realized(i);
    } else {
      // ideal: a_n·exp(jφ_n), φ_n = −k r_n·d̂ (interface contract)
      amp = el.enabled[i] ? plan.amplitude[i]! : 0;
      ph = -k * (el.x[i]! * plan.beams.u[b]! + el.y[i]! * plan.beams.v[b]! + el.z[i]! * plan.beams.w[b]!);
    }
    wr.push(amp * Math.cos(ph));
    wi.push(amp * Math.sin(ph));
  }
  const P = (u: number, v: number) => {
    // past the horizon there is no direction: a planar array's pattern continues analytically; a
    // non-planar one's takes the value at the horizon point radially inward (flat beyond the horizon)
    const r = Math.hypot(u, v);
    if (!planar && r > 1) { u /= r; v /= r; }
    const w = uvToW(u, v);
    let re = 0, im = 0;
    for (let i = 0; i < el.count; i++) {
      const a = k * (el.x[i]! * u + el.y[i]! * v + el.z[i]! * w);
      const c = Math.cos(a), s = Math.sin(a);
      re += wr[i]! * c - wi[i]! * s;
      im += wr[i]! * s + wi[i]! * c;
    }
    return re * re + im * im;
  };
  const PE = elementPower
    ? (u: number, v: number) => {
        const r = Math.hypot(u, v);
        return P(u, v) * (r > 1 ? elementPower(u / r, v / r) : elementPower(u, v));
      }
    : P;
  return denseReference(PE, plan.beams.u[b]!, plan.beams.v[b]!, G, planar ? { horizon: 8000 } : { horizon: 8000, band: { toDeg: 20, stepDeg: 0.5 } });
}

/**
 * The reference metrics of a pattern P(u, v) = |AF|² (our own brute force, no FFT, no
 * derivatives): a dense u-v grid over the disc, the peak nearest (u0, v0) by
 * hill-climbing, the main lobe by a monotone flood; the sidelobe is the best of the
 * grid's visible cells outside the main lobe, of `horizon` equally spaced points on the
 * circle u² + v² = 1 and, with `band`, of rings of constant elevation near the horizon
 * (where a u-v grid is coarse in elevation: non-planar arrays); then zoomed dense grids
 * (in u-v, or in α along the circle) around the peak and the best sidelobe. Both stay in
 * visible space.
 */
export function denseReference(P: (u: number, v: number) => number, u0: number, v0: number, G: number, opts: { horizon?: number; band?: { toDeg: number; stepDeg: number } } = {}) {
  const h = 2 / (G - 1);
  const grid = new Float64Array(G * G);
  for (let j = 0; j < G; j++) for (let i = 0; i < G; i++) grid[j * G + i] = P(-1 + i * h, -1 + j * h);
  const vis = (i: number, j: number) => (-1 + i * h) ** 2 + (-1 + j * h) ** 2 <= 1;
  // the main lobe is a feature of the pattern: climb from (u0, v0) through all cells (past the horizon
  // too), flood from there; the peak is a direction: the best visible point of that lobe
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
  const inMain = (u: number, v: number) => main[Math.round((v + 1) / h) * G + Math.round((u + 1) / h)] === 1;
  let su = NaN, sv = NaN, sp = -Infinity, onCircle = false;
  for (let j = 0; j < G; j++) for (let i = 0; i < G; i++) if (vis(i, j) && !main[j * G + i] && grid[j * G + i]! > sp) { sp = grid[j * G + i]!; su = -1 + i * h; sv = -1 + j * h; }
  const K = opts.horizon ?? 0;
  for (let i = 0; i < K; i++) {
    const a = (2 * Math.PI * i) / K, u = Math.cos(a), v = Math.sin(a);
    const p = P(u, v);
    if (p > sp && !inMain(u, v)) { sp = p; su = u; sv = v; onCircle = true; }
  }
  if (opts.band) {
    for (let e = opts.band.stepDeg; e <= opts.band.toDeg; e += opts.band.stepDeg) {
      const rho = Math.cos((e * Math.PI) / 180);
      const n = Math.ceil(360 / opts.band.stepDeg);
      for (let i = 0; i < n; i++) {
        const a = (2 * Math.PI * i) / n, u = rho * Math.cos(a), v = rho * Math.sin(a);
        const p = P(u, v);
        if (p > sp && !inMain(u, v)) { sp = p; su = u; sv = v; onCircle = false; }
      }
    }
  }
  // the sidelobe's zoom stays outside the main lobe (nearest dense cell not in it)
  const zoom = (u: number, v: number, span: number, inDisc: boolean, outsideMain = false) => {
    let bu = u, bv = v, bp = P(u, v);
    for (let level = 0; level < (span > 0 ? 7 : 0); level++) {
      const n = 20;
      let nu = bu, nv = bv, np = bp;
      for (let j = -n; j <= n; j++) for (let i = -n; i <= n; i++) {
        const uu = bu + (i * span) / n, vv = bv + (j * span) / n;
        if (inDisc && uu * uu + vv * vv > 1) continue;
        if (outsideMain && inMain(uu, vv)) continue;
        const p = P(uu, vv);
        if (p > np) { np = p; nu = uu; nv = vv; }
      }
      bu = nu; bv = nv; bp = np;
      span /= 8;
    }
    // a maximum on the circle: zoom along it too
    if (inDisc && bu * bu + bv * bv > 1 - 4 * h) {
      let a = Math.atan2(bv, bu), s = 4 * h;
      for (let level = 0; level < 8; level++) {
        let na = a, np = bp;
        for (let i = -20; i <= 20; i++) {
          const t = a + (i * s) / 20;
          const p = P(Math.cos(t), Math.sin(t));
          if (p > np && !(outsideMain && inMain(Math.cos(t), Math.sin(t)))) { np = p; na = t; }
        }
        if (np > bp) { bp = np; bu = Math.cos(na); bv = Math.sin(na); }
        a = na;
        s /= 8;
      }
    }
    return { u: bu, v: bv, p: bp };
  };
  let pi = -1;
  for (let q = 0; q < G * G; q++) if (main[q] && vis(q % G, Math.floor(q / G)) && (pi < 0 || grid[q]! > grid[pi]!)) pi = q;
  const pk = zoom(-1 + (pi % G) * h, -1 + Math.floor(pi / G) * h, 2 * h, true);
  const sl = onCircle ? zoom(su, sv, 0, true, true) : zoom(su, sv, 2 * h, true, true);
  return {
    pslDb: 10 * Math.log10(sl.p / pk.p),
    sidelobeU: sl.u,
    sidelobeV: sl.v,
    peakU: pk.u,
    peakV: pk.v,
    pointingDeg: angleBetweenDeg({ u: u0, v: v0, w: uvToW(u0, v0) }, { u: pk.u, v: pk.v, w: uvToW(pk.u, pk.v) }),
  };
}



/**
 * A line array's metrics with an element pattern, as README "Element pattern" defines them
 * (our own brute force, derived from that text; no engine code beyond the quantizer): the
 * pattern on the cut through the commanded direction along the line, |AF(t)|²·E at
 * (t, c0) (row; a column (c0, t)) where t² + c0² ≤ 1, past that chord `horizonPower` at
 * t; sampled at 400 001 points of t ∈ [−1, 1]; the peak by hill-climbing from t0 and a
 * golden-section search within the chord, the main lobe the monotone run around it, the
 * sidelobe the largest sample outside it.
 */
export function bruteForceLineCut(plan: Plan, b: number, elementPower: (u: number, v: number) => number, horizonPower: number, fi = 0) {
  const el = plan.elements;
  const realized = realizedWeights(plan, b, fi);
  const k = (2 * Math.PI * plan.frequenciesHz[fi]!) / SPEED_OF_LIGHT;
  const row = el.y.every((y) => y === el.y[0]);
  const pos = row ? el.x : el.y;
  const wr: number[] = [], wi: number[] = [];
  for (let i = 0; i < el.count; i++) {
    const [amp, ph] = realized(i);
    wr.push(amp * Math.cos(ph));
    wi.push(amp * Math.sin(ph));
  }
  const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!;
  const [t0, c0] = row ? [u0, v0] : [v0, u0];
  const chord = Math.sqrt(Math.max(0, 1 - c0 * c0));
  const f = (t: number) => {
    let re = 0, im = 0;
    for (let i = 0; i < el.count; i++) {
      const a = k * pos[i]! * t;
      re += wr[i]! * Math.cos(a) - wi[i]! * Math.sin(a);
      im += wr[i]! * Math.sin(a) + wi[i]! * Math.cos(a);
    }
    const e = Math.abs(t) <= chord ? (row ? elementPower(t, c0) : elementPower(c0, t)) : horizonPower;
    return (re * re + im * im) * e;
  };
  const N = 400001, h = 2 / (N - 1);
  const y = new Float64Array(N);
  for (let i = 0; i < N; i++) y[i] = f(-1 + i * h);
  let i = Math.round((t0 + 1) / h);
  for (;;) {
    const j = i + 1 < N && y[i + 1]! > y[i]! ? i + 1 : i > 0 && y[i - 1]! > y[i]! ? i - 1 : i;
    if (j === i) break;
    i = j;
  }
  let lo = i, hi = i;
  while (lo > 0 && y[lo - 1]! <= y[lo]!) lo--;
  while (hi < N - 1 && y[hi + 1]! <= y[hi]!) hi++;
  // golden-section search for the peak within two samples and the chord
  let a = Math.max(-1 + (i - 2) * h, -chord), c = Math.min(-1 + (i + 2) * h, chord);
  const g = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 200 && c - a > 1e-14; it++) {
    const x1 = c - g * (c - a), x2 = a + g * (c - a);
    if (f(x1) < f(x2)) a = x1; else c = x2;
  }
  const tp = (a + c) / 2;
  const peak = Math.max(f(tp), f(-chord) * (Math.abs(-chord - tp) < 4 * h ? 1 : 0), f(chord) * (Math.abs(chord - tp) < 4 * h ? 1 : 0));
  const tPeak = f(tp) >= peak ? tp : Math.abs(chord - tp) < Math.abs(-chord - tp) ? chord : -chord;
  let side = 0;
  for (let j = 0; j < N; j++) if ((j < lo || j > hi) && y[j]! > side) side = y[j]!;
  const [pu, pv] = row ? [tPeak, c0] : [c0, tPeak];
  return {
    pslDb: side > 0 ? 10 * Math.log10(side / peak) : NaN,
    pointingDeg: angleBetweenDeg({ u: u0, v: v0, w: uvToW(u0, v0) }, { u: pu, v: pv, w: uvToW(pu, pv) }),
  };
}
