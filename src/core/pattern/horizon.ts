/**
 * The horizon u² + v² = 1 as part of the sidelobe search, by construction.
 *
 * The largest |AF|² over the closed visible disc outside the main lobe lies either at an
 * interior local maximum (found on the sampled u-v grid) or on the horizon circle, where
 * a lobe that peaks in invisible space is cut off. The grid alone cannot see the second
 * kind: the last visible cell can sit a whole cell inside the circle, on a steep flank.
 * So every pattern is also traced along the circle itself, densely enough for its
 * aperture (consecutive samples at most one grid cell apart along u and along v, the
 * grid's own density), with exact values at exact horizon points, and the local maxima
 * of the trace are refined along the circle by a 1-D search in the azimuth angle α
 * (u = cos α, v = sin α) on the exact array factor.
 *
 * Lattices (FFT mode) sample the circle where it crosses the grid's lines: at a grid
 * column u_m the field is Σ_rows R_r(m)·e^{−jk·dy·r·Δv} from the row transforms the 2-D
 * FFT has already taken, at a grid row v_n it is Σ_cols C_c(n)·e^{−jk·px·c·Δu} from the
 * column transforms of the weights; columns are used where the circle runs across the
 * columns (|tan α| ≥ du/dv), rows elsewhere. Other geometries (direct mode) are
 * sampled at equal steps of α with the exact evaluator (z ≠ 0 included: on the horizon
 * w = 0 for every point, so the z term is exact there), or, for planar lists where it is
 * cheaper, from the array factor's Fourier series in α (CircleSeries).
 */
import type { AfEvaluator } from "./evaluator.js";
import { nextPow2, PowerFft2 } from "./fft.js";
import { LOBES_WITHIN } from "./lobe-kernel.js";

export interface HorizonTrace {
  n: number;
  /** horizonMax's scratch: which samples lie in the main lobe */
  main: Uint8Array;
  du: Float64Array;
  dv: Float64Array;
  /**
   * α of each sample: with `lazyAlpha` (lattice traces) α = atan2(av, au) of the sample's
   * absolute (u, v), taken only where horizonMax needs it; otherwise in `alpha`.
   */
  alpha: Float64Array;
  lazyAlpha: boolean;
  au: Float64Array;
  av: Float64Array;
  p: Float64Array;
  /**
   * With an element pattern: |AF|² alone at each sample (`p` is |AF|²·E), for the rim's
   * lobes (lobes.ts rimClimbs); `hasAf` says whether this trace filled it.
   */
  af: Float64Array;
  hasAf: boolean;
}

export function allocTrace(cap = 256): HorizonTrace {
  const f = () => new Float64Array(cap);
  return { n: 0, main: new Uint8Array(cap), du: f(), dv: f(), alpha: f(), lazyAlpha: false, au: f(), av: f(), p: f(), af: f(), hasAf: false };
}

/** Room for `cap` samples (contents not kept). */
function reserve(t: HorizonTrace, cap: number): void {
  if (t.p.length >= cap) return;
  const f = () => new Float64Array(cap);
  t.main = new Uint8Array(cap);
  t.du = f(); t.dv = f(); t.alpha = f(); t.au = f(); t.av = f(); t.p = f(); t.af = f();
}

function push(t: HorizonTrace, du: number, dv: number, alpha: number, p: number, af = p): void {
  if (t.n === t.p.length) {
    const grow = (a: Float64Array) => { const b = new Float64Array(a.length * 2); b.set(a); return b; };
    t.du = grow(t.du);
    t.dv = grow(t.dv);
    t.alpha = grow(t.alpha);
    t.au = grow(t.au);
    t.av = grow(t.av);
    t.p = grow(t.p);
    t.af = grow(t.af);
  }
  t.af[t.n] = af;
  t.du[t.n] = du;
  t.dv[t.n] = dv;
  t.alpha[t.n] = alpha;
  t.p[t.n] = p;
  t.n++;
}

/** α of sample i. */
export function alphaOf(t: HorizonTrace, i: number): number {
  return t.lazyAlpha ? Math.atan2(t.av[i]!, t.au[i]!) : t.alpha[i]!;
}

/**
 * A lattice's one-dimensional transforms (FFT mode), held in its PowerFft2's memory
 * (slot 0: the weights last sampled, slot 1: kept): R_r(m) = Σ_x conj(w)·e^{−2πi·m·x/nx}
 * per row r, C along y per grid column c. Grid index x sits at x_0 + x·px and row r at
 * y_0 + r·dy.
 */
export interface LatticeSpectra {
  kpx: number;
  kdy: number;
  du: number;
  dv: number;
  fft: PowerFft2;
  slot: 0 | 1;
}

/**
 * Trace the horizon of beam (u0, v0) from a lattice's transforms, in increasing α (one
 * turn from −π), in WebAssembly (wasm/fft.ts, trace): one turn starting at the bottom arc
 * (α ≈ −3π/4; the left arc crosses α = ±π). A sample at grid column m has v on the circle
 * (u = u0 + m·du), at grid row n u on the circle (v = v0 + n·dv); rows are used where the
 * circle runs across the rows (|v| < sin atan(du/dv)), columns elsewhere. Each sample is
 * |Σ_r R_r(m)·e^{−j·k·dy·r·(v − v0)}|² (or the same along a column of C).
 */
export function traceLattice(s: LatticeSpectra, u0: number, v0: number, out: HorizonTrace): void {
  out.n = 0;
  out.lazyAlpha = true;
  out.hasAf = false;
  const { du, dv } = s;
  const sa = Math.sin(Math.atan(du / dv));
  const ca = Math.sqrt(1 - sa * sa);
  // | 0: small integers (within the grid), and never −0, which would send V8's optimized
  // code back to the interpreter ("not a Smi")
  const mLo = Math.ceil((-ca - u0) / du) | 0, mHi = Math.floor((ca - u0) / du) | 0;
  const nLo = Math.ceil((-sa - v0) / dv) | 0, nHi = Math.floor((sa - v0) / dv) | 0;
  const cap = 2 * Math.max(0, mHi - mLo + 1) + 2 * Math.max(0, nHi - nLo + 1);
  reserve(out, Math.max(cap, s.fft.traceRoom));
  out.n = s.fft.trace(s.slot, u0, v0, du, dv, sa, ca, mLo, mHi, nLo, nHi, s.kdy, s.kpx, cap, out);
}

/** traceExact's sample count for steps of α no larger than `step` (radians). */
export function exactSamples(step: number): number {
  return Math.max(16, Math.ceil((2 * Math.PI) / step));
}

/**
 * Trace the horizon with the exact evaluator at equal steps of α no larger than `step`
 * (radians); with `series` (a planar list where it is cheaper: CircleSeries.worthIt), from
 * its Fourier series in α instead.
 */
export function traceExact(ev: AfEvaluator, u0: number, v0: number, step: number, out: HorizonTrace, series: CircleSeries | null = null): void {
  out.n = 0;
  out.lazyAlpha = false;
  out.hasAf = ev.element !== null;
  const n = exactSamples(step);
  if (series) {
    series.trace(ev, u0, v0, n, out);
    return;
  }
  // ev.power written out, keeping |AF|² alone beside it
  const el = ev.element;
  for (let i = 0; i < n; i++) {
    const a = -Math.PI + (2 * Math.PI * i) / n;
    const du = Math.cos(a) - u0, dv = Math.sin(a) - v0;
    const f = ev.field(du, dv), af = f[0] * f[0] + f[1] * f[1];
    push(out, du, dv, a, el ? af * el.power(u0 + du, v0 + dv) : af, af);
  }
}

/**
 * The peak value along the horizon near α (within [lo, hi]) that the quadratic model of
 * |F|²(cos α − u0, sin α − v0) at α predicts; Infinity when the model has no maximum
 * or its vertex falls outside [lo, hi].
 */
export function alongCirclePeak(ev: AfEvaluator, a: number, u0: number, v0: number, lo: number, hi: number): number {
  const c = Math.cos(a), s = Math.sin(a);
  const d = ev.derivs(c - u0, s - v0);
  // u = cos α, v = sin α: u' = −s, v' = c, u'' = −c, v'' = −s
  const pa = -s * d.pu + c * d.pv;
  const paa = s * s * d.puu - 2 * s * c * d.puv + c * c * d.pvv - c * d.pu - s * d.pv;
  if (!(paa < 0)) return Infinity;
  const step = -pa / paa;
  if (!(a + step >= lo && a + step <= hi)) return Infinity;
  const v = d.p - (pa * pa) / (2 * paa);
  return Number.isFinite(v) ? v : Infinity;
}

/**
 * The main lobe as horizonMax sees it: offset (Δu, Δv) is in it when cell
 * (round(Δu/du) − m0, round(Δv/dv) − n0) of the w × h `mask` is 1; off the mask, `outside`.
 *
 * `visible` (non-null only for a window weighted by an element pattern): that window is 0
 * past the horizon, so a main lobe that reaches the horizon floods the whole invisible rim
 * and the rim's mask says nothing. A point whose cell is invisible then takes the mask of
 * the nearest visible cell inward along its radius from the origin (u0, v0 the window's
 * frame). Without it a sidelobe peaking within half a cell of the horizon, and every
 * horizon sample, counted as main lobe whenever the main lobe touched the horizon.
 */
export interface MainLobeMap {
  mask: Uint8Array;
  m0: number;
  n0: number;
  w: number;
  h: number;
  du: number;
  dv: number;
  outside: boolean;
  visible: Uint8Array | null;
  u0: number;
  v0: number;
  /**
   * The main-lobe peak (Δu, Δv), refined; NaN when unknown. horizonMax uses it to tell
   * the peak from a lobe cut off by the horizon between the last visible cell and the
   * circle, which the nearest cell's mask counts as main lobe (see horizonMax).
   */
  peakDu: number;
  peakDv: number;
  /** the evaluator's lockU / lockV: a line array (its pattern constant across the line) */
  lockU: boolean;
  lockV: boolean;
}

export function inMain(l: MainLobeMap, du: number, dv: number): boolean {
  // + 0: Math.round gives −0 for (−0.5, −0]; as an index −0 sent V8's optimized code back
  // to the interpreter again and again ("minus zero": ~180 times in a 16×16 × 4096 build);
  // NaN stays NaN (not inside)
  const ra = Math.round(du / l.du) + 0 - l.m0, rb = Math.round(dv / l.dv) + 0 - l.n0;
  if (!(ra >= 0 && rb >= 0 && ra < l.w && rb < l.h)) return l.outside;
  if (l.visible && !l.visible[rb * l.w + ra]) return inwardMask(l, du, dv);
  return l.mask[rb * l.w + ra] === 1;
}

/** The mask of the nearest visible cell inward along the radius through u0 + Δu, v0 + Δv (see MainLobeMap). */
function inwardMask(l: MainLobeMap, du: number, dv: number): boolean {
  if (l.lockU !== l.lockV) {
    // A line array's pattern depends on the coordinate along the line alone: the nearest
    // visible cell with the same coordinate (same column of a row, same row of a column)
    // has the same value and the same mask. The radius moves along the line too and can
    // cross a null: 8 × 1 at λ/2, cos^1.5, az 60° el 10°: a horizon point on the main
    // lobe's flank (u = 0.665) took the mask at u = 0.50, past the first null, and PSL
    // printed −7.64 dB where the brute force has −9.97 dB.
    const ra = Math.round(du / l.du) + 0 - l.m0, rb = Math.round(dv / l.dv) + 0 - l.n0;
    const n = l.lockV ? l.h : l.w;
    for (let k = 1; k < n; k++)
      for (const s of [-1, 1]) {
        const a = l.lockV ? ra : ra + s * k, b = l.lockV ? rb + s * k : rb;
        if (a >= 0 && b >= 0 && a < l.w && b < l.h && l.visible![b * l.w + a]) return l.mask[b * l.w + a] === 1;
      }
  }
  const u = l.u0 + du, v = l.v0 + dv;
  const r = Math.hypot(u, v);
  const step = 0.5 * Math.min(l.du, l.dv);
  for (let t = 1; t <= 64; t++) {
    const rr = r - t * step;
    if (!(rr > 0)) break;
    const ra = Math.round((u * (rr / r) - l.u0) / l.du) + 0 - l.m0, rb = Math.round((v * (rr / r) - l.v0) / l.dv) + 0 - l.n0;
    if (!(ra >= 0 && rb >= 0 && ra < l.w && rb < l.h)) return l.outside;
    if (l.visible![rb * l.w + ra]) return l.mask[rb * l.w + ra] === 1;
  }
  return true;
}

export interface HorizonMax {
  p: number;
  du: number;
  dv: number;
}

/**
 * Only trace maxima within this factor of the best sample are refined. Consecutive
 * samples are at most one grid cell apart along each axis, so a maximum along the
 * circle lies within half a step of a sample, as a grid lobe's peak lies within half a
 * cell of a grid sample: the same window as the grid's lobes (lobe-kernel.ts LOBES_WITHIN, 3 dB).
 */
export const HORIZON_REFINE_WITHIN = LOBES_WITHIN;

/**
 * The largest |AF|² along the horizon outside the main lobe: the trace's local maxima
 * (main-lobe samples excluded) within HORIZON_REFINE_WITHIN of max(best sample, `floor`)
 * are refined by golden-section search in α between their neighbours. Returns p = NaN
 * when every sample is in the main lobe, and p = 0 when the pattern is 0 on the horizon
 * outside it (a cosine element's): the callers count neither as a lobe.
 *
 * `skipBelow` (the caller's best interior value over its QUAD_MARGIN, lobes.ts): a
 * maximum whose peak along the circle, as the quadratic model at its sample predicts
 * (one exact evaluation of value, gradient and Hessian), stays below it cannot win, and
 * is not searched; its sample still counts. NaN: every maximum is searched.
 */
export function horizonMax(t: HorizonTrace, ev: AfEvaluator, u0: number, v0: number, lobe: MainLobeMap, floor: number, out: HorizonMax, skipBelow = NaN): HorizonMax {
  out.p = NaN;
  out.du = NaN;
  out.dv = NaN;
  const n = t.n;
  if (n === 0) return out;
  const val = (i: number) => {
    const k = ((i % n) + n) % n;
    return t.p[k]!;
  };
  if (t.main.length < n) t.main = new Uint8Array(t.p.length);
  const main = t.main;
  let best = 0;
  const { mask, m0, n0, w, h, du: cu, dv: cv, outside } = lobe;
  for (let i = 0; i < n; i++) {
    // inMain(lobe, Δu, Δv), written out (no call per sample); | 0 as in traceLattice (no −0)
    const ra = (Math.round(t.du[i]! / cu) - m0) | 0, rb = (Math.round(t.dv[i]! / cv) - n0) | 0;
    let inside = ra >= 0 && rb >= 0 && ra < w && rb < h ? mask[rb * w + ra] === 1 : outside;
    if (lobe.visible && ra >= 0 && rb >= 0 && ra < w && rb < h && !lobe.visible[rb * w + ra]) inside = inwardMask(lobe, t.du[i]!, t.dv[i]!);
    main[i] = inside ? 1 : 0;
    if (!inside && t.p[i]! > best) best = t.p[i]!;
  }
  const bar = HORIZON_REFINE_WITHIN * Math.max(best, Number.isFinite(floor) ? floor : 0);
  for (let i = 0; i < n; i++) {
    if (main[i]) continue;
    const pi = t.p[i]!;
    if (!(out.p >= pi)) { out.p = pi; out.du = t.du[i]!; out.dv = t.dv[i]!; }
    // a sample of 0 (a cosine element's horizon) is no lobe to climb
    if (pi < bar || !(pi > 0)) continue;
    const l = (i - 1 + n) % n, r = (i + 1) % n;
    if ((!main[l] && val(l) > pi) || (!main[r] && val(r) > pi)) continue;
    const ai = alphaOf(t, i);
    bracketAt(t, ai, l, r, gs);
    let bp = pi, ba = ai;
    if (skipBelow > 0 && alongCirclePeak(ev, ai, u0, v0, gs[0]!, gs[1]!) < skipBelow) continue;
    goldenAlong(ev, u0, v0, gs);
    const x1 = gs[0]!, f1 = gs[1]!, x2 = gs[2]!, f2 = gs[3]!;
    const a = f1 > f2 ? x1 : x2;
    const pa = Math.max(f1, f2);
    if (pa > bp) {
      const su = Math.cos(a), sv = Math.sin(a), du = su - u0, dv = sv - v0;
      // the search must not have climbed into the main lobe: its mask, unless the point is
      // a maximum of the closed disc (the pattern does not rise inward) more than half a
      // cell from the main peak, as in the pass below. The mask is the nearest cell's, and
      // the flood can run a cell past the trough: a 3 × 20 list at 0.64 λ, beam at el −25.8°,
      // kept its sample's −23.4130 dB where the lobe peaks at −23.4016 dB a cell inside the
      // flood's overshoot (the FFT grid's finer cells and the brute force agree on −23.4016)
      if (!inMain(lobe, du, dv) || (notMainPeak(ev, lobe, du, dv) && risesOutward(ev, du, dv, su, sv, pa, cu, cv))) { bp = pa; ba = a; }
    }
    if (bp > out.p) { out.p = bp; out.du = Math.cos(ba) - u0; out.dv = Math.sin(ba) - v0; }
  }
  // Samples the mask counts as main lobe that are local maxima of the whole trace. The
  // mask is the nearest grid cell's, and the trough that ends the main lobe can lie
  // between the last visible cell and the horizon: a lobe cut off there is narrower than
  // a cell (2×2 at λ/2 with calibration errors, boresight: the main lobe ends 0.04 before
  // u = −1, and the pattern rises again to −23.7 dB at the horizon; it printed no PSL).
  // Refined along the circle, such a maximum is a sidelobe when the pattern does not rise
  // inward from it (then it is a local maximum of the closed disc, and no local maximum
  // but the main peak lies in the monotone flood from that peak) and it is not the main
  // peak itself (more than half a cell from it).
  if (Number.isFinite(lobe.peakDu) && Number.isFinite(lobe.peakDv)) {
    for (let i = 0; i < n; i++) {
      if (!main[i]) continue;
      const pi = t.p[i]!;
      if (!(pi > 0) || pi < bar) continue;
      const l = (i - 1 + n) % n, r = (i + 1) % n;
      // a sample equal to both neighbours lies on a flat run (a pattern that is constant
      // along the circle, as one element's is): no maximum to climb there. Without this a
      // 1-element array searched every sample (1 × 65 536 beams 1.8 → 2.8 s)
      if (val(l) > pi || val(r) > pi || (val(l) === pi && val(r) === pi)) continue;
      const ai = alphaOf(t, i);
      bracketAt(t, ai, l, r, gs);
      goldenAlong(ev, u0, v0, gs);
      const x1 = gs[0]!, f1 = gs[1]!, x2 = gs[2]!, f2 = gs[3]!;
      const [a, pa] = f1 > f2 ? [x1, f1] : [x2, f2];
      const [ba, bp] = pa > pi ? [a, pa] : [ai, pi];
      const su = Math.cos(ba), sv = Math.sin(ba);
      const du = su - u0, dv = sv - v0;
      if (notMainPeak(ev, lobe, du, dv) && risesOutward(ev, du, dv, su, sv, bp, cu, cv) && !(out.p >= bp)) { out.p = bp; out.du = du; out.dv = dv; }
    }
  }
  // The circle's four extreme points (u = ±1 or v = ±1), evaluated exactly. There u or v
  // turns back along the circle, so a lobe cut off by the horizon has its largest
  // visible value at one of them, which may lie between two samples even when those
  // are less than a cell apart: a line array's grid is one cell wide across the line
  // (1×8 at λ/2: du = 0.5), its samples at v = −0.98 on either side of (0, −1) sat 6 dB
  // below the value there, past a null. A line array's pattern depends on one
  // coordinate, so along the circle its only maxima besides the lobe peaks are these.
  for (let e = 0; e < 4; e++) {
    const cu = e === 0 ? 1 : e === 2 ? -1 : 0, cv = e === 1 ? 1 : e === 3 ? -1 : 0;
    const du = cu - u0, dv = cv - v0;
    const pe = ev.power(du, dv);
    // in the mask: still a sidelobe if it is an end of a line array's line (u = ±1 for a
    // row, v = ±1 for a column) and the pattern rises toward it (as for the trace's samples
    // above; 2×1 at λ/2 with calibration errors, boresight: −32.7 dB at u = −1, 0.014 past
    // the trough)
    const lineEnd = ev.lockV ? cu !== 0 && !ev.lockU : ev.lockU && cv !== 0;
    if (inMain(lobe, du, dv) && !(lineEnd && pe > 0 && notMainPeak(ev, lobe, du, dv) && lineEndRises(ev, du, dv, cu, cv, pe, lobe.du, lobe.dv))) continue;
    if (!(out.p >= pe)) { out.p = pe; out.du = du; out.dv = dv; }
  }
  return out;
}

/** horizonMax's scratch: a bracket [lo, hi], then the golden-section search's last two points x1, f1, x2, f2. */
const gs = new Float64Array(4);

/** The bracket [α_l, α_r] around α_i (unwrapped) of trace samples l and r into g[0], g[1]. */
function bracketAt(t: HorizonTrace, ai: number, l: number, r: number, g: Float64Array): void {
  let lo = alphaOf(t, l), hi = alphaOf(t, r);
  while (lo > ai) lo -= 2 * Math.PI;
  while (lo < ai - Math.PI) lo += 2 * Math.PI;
  while (hi < ai) hi += 2 * Math.PI;
  while (hi > ai + Math.PI) hi -= 2 * Math.PI;
  g[0] = lo;
  g[1] = hi;
}

/**
 * Golden-section search for the largest |F|²(cos α − u0, sin α − v0) in the bracket
 * g[0], g[1] (to 1e-4 of its width: the value is then within ~1e-8, relative, of the
 * maximum); leaves the last two points in g: x1, f1, x2, f2.
 */
function goldenAlong(ev: AfEvaluator, u0: number, v0: number, g: Float64Array): void {
  const at = (a: number) => ev.power(Math.cos(a) - u0, Math.sin(a) - v0);
  const r = (Math.sqrt(5) - 1) / 2;
  let lo = g[0]!, hi = g[1]!;
  let x1 = hi - r * (hi - lo), x2 = lo + r * (hi - lo);
  let f1 = at(x1), f2 = at(x2);
  const tol = 1e-4 * (hi - lo);
  for (let it = 0; it < 48 && hi - lo > tol; it++) {
    if (f1 < f2) { lo = x1; x1 = x2; f1 = f2; x2 = lo + r * (hi - lo); f2 = at(x2); }
    else { hi = x2; x2 = x1; f2 = f1; x1 = hi - r * (hi - lo); f1 = at(x1); }
  }
  g[0] = x1; g[1] = f1; g[2] = x2; g[3] = f2;
}

/**
 * (Δu, Δv) lies more than half a cell from the main-lobe peak (lobe.peakDu, lobe.peakDv);
 * for a line array (`ev.lockU` / `ev.lockV`) along its free coordinate only, its pattern
 * being constant across the line (the peak's ridge meets the horizon at the same u or v).
 */
export function notMainPeak(ev: AfEvaluator, lobe: MainLobeMap, du: number, dv: number): boolean {
  const a = ev.lockU ? 0 : (du - lobe.peakDu) / lobe.du, b = ev.lockV ? 0 : (dv - lobe.peakDv) / lobe.dv;
  return Math.hypot(a, b) > 0.5;
}

/**
 * At the horizon point (su, sv) = d̂ + (Δu, Δv), the pattern does not fall outward along
 * the radius (it does not rise inward): the exact gradient's outward component is ≥ 0,
 * up to rounding (1e-9 of p per cell).
 */
function risesOutward(ev: AfEvaluator, du: number, dv: number, su: number, sv: number, p: number, cu: number, cv: number): boolean {
  const d = ev.derivs(du, dv);
  return d.pu * su + d.pv * sv >= -1e-9 * p / Math.min(cu, cv);
}

/**
 * At the end of a line array's line (u = ±1 for a row, v = ±1 for a column) the pattern
 * does not rise inward: as risesOutward, or, with an element pattern, whose differences
 * straddle the line's end (0 past it), the pattern 1e-6 cell inward along the line is
 * not above p (2 × 1 row at 0.508 λ with a table element: a −47.99 dB lobe at u = ±1,
 * 0.016 past the null, brute force; none printed).
 */
function lineEndRises(ev: AfEvaluator, du: number, dv: number, cu: number, cv: number, p: number, cellU: number, cellV: number): boolean {
  if (risesOutward(ev, du, dv, cu, cv, p, cellU, cellV)) return true;
  if (!ev.element) return false;
  return p >= ev.power(du - Math.sign(cu) * 1e-6 * cellU, dv - Math.sign(cv) * 1e-6 * cellV);
}

/** Most Bessel values CircleSeries keeps (32 MB); past it they are recomputed at every trace. */
const MAX_BESSEL_TABLE = 2 ** 22;

/** Steps of besselJ's recurrence for orders 0 … L (at z ≤ L, as the series' are). */
function besselSteps(L: number): number {
  return 2 * L + 30 + Math.ceil(Math.sqrt(160 * L));
}

/** Relative size below which a Bessel term J_n(z) is dropped: orders past z + 12·z^⅓ + 10 (Airy tail e^{−(2/3)(1.26·12)^{3/2}} < 1e−17). */
function besselOrders(z: number): number {
  return Math.ceil(z + 12 * Math.cbrt(z) + 10);
}

/**
 * J_0(z) … J_L(z) into out[0 … L] (z ≥ 0), by Miller's backward recurrence
 * J_{n−1} = (2n/z)·J_n − J_{n+1} from well above both L and z, normalised by
 * J_0 + 2·Σ J_{2k} = 1 (Abramowitz & Stegun 9.1.27 and 9.1.46; the start as Numerical
 * Recipes' bessj, from memory). Rescaled as it goes, so that no value overflows.
 */
export function besselJ(z: number, L: number, out: Float64Array): void {
  out.fill(0, 0, L + 1);
  // an element at the centre, or within 1e-30 of a wavelength of it: J_0 = 1, J_1 = z/2, the rest below
  if (z < 1e-30) { out[0] = 1; if (L >= 1) out[1] = z / 2; return; }
  const top = Math.max(L, Math.ceil(z));
  let start = top + 30 + Math.ceil(Math.sqrt(160 * top));
  start += start & 1;
  let jp = 0, j = 1e-300, sum = 0;
  for (let n = start; n > 0; n--) {
    const jm = ((2 * n) / z) * j - jp;
    jp = j;
    j = jm;
    // j is now J_{n−1} (unnormalised)
    if (n - 1 <= L) out[n - 1] = j;
    if ((n - 1) % 2 === 0) sum += n - 1 === 0 ? j : 2 * j;
    if (Math.abs(j) > 1e250) {
      j *= 1e-250; jp *= 1e-250; sum *= 1e-250;
      for (let m = n - 1; m <= L; m++) out[m] = out[m]! * 1e-250;
    }
  }
  for (let m = 0; m <= L; m++) out[m] = out[m]! / sum;
}

/**
 * The array factor of a planar element list along the horizon as a Fourier series in α
 * (u = cos α, v = sin α), by the Jacobi–Anger expansion e^{jz·cos θ} = Σ_n j^n·J_n(z)·e^{jnθ}
 * (Abramowitz & Stegun 9.1.41; common practice in circular-array analysis). With the
 * positions taken from their centre, x = r·cos φ, y = r·sin φ:
 *
 *   F(α) = Σ_e c_e·e^{jk·r_e·cos(α − φ_e)} = Σ_n a_n·e^{jnα},
 *   a_n = j^n·Σ_e c_e·J_n(k·r_e)·e^{−jnφ_e},  c_e = w_e·e^{−jk(x_e·u0 + y_e·v0)},
 *
 * |n| ≤ L = k·r_max + 12·(k·r_max)^⅓ + 10 (the terms past it are below 1e−17 of the
 * largest). N equal steps of α are then one N-point transform of the coefficients folded
 * modulo N (exact for those samples, whatever L), so a trace costs elements × (L + 1)
 * products and an FFT instead of N exact evaluations, each a sine and cosine per distinct
 * coordinate. The common phase of the centring drops out of |F|². N is the exact trace's
 * count rounded up to a power of two (denser, never coarser).
 */
export class CircleSeries {
  readonly orders: number;
  private readonly n: number;
  private readonly kx: Float64Array;
  private readonly ky: Float64Array;
  /** per element e^{−jφ_e} */
  private readonly rc: Float64Array;
  private readonly rs: Float64Array;
  /** J_n(k·r_e), element-major, L + 1 each; null: recomputed per element at every trace into col */
  private readonly J: Float64Array | null;
  private readonly col: Float64Array;
  /** k·r_e */
  private readonly z: Float64Array;
  private readonly ar: Float64Array;
  private readonly ai: Float64Array;
  private readonly br: Float64Array;
  private readonly bi: Float64Array;
  private fft: PowerFft2 | null = null;
  private cells = new Int32Array(0);
  private fr = new Float64Array(0);
  private fi = new Float64Array(0);

  /** Products a trace costs, against the exact trace's (CircleSeries.worthIt). */
  static orderCount(x: Float64Array, y: Float64Array, k: number): number {
    const [cx, cy] = centre(x, y);
    let r = 0;
    for (let e = 0; e < x.length; e++) r = Math.max(r, Math.hypot(x[e]! - cx, y[e]! - cy));
    return besselOrders(k * r);
  }

  /**
   * Cheaper than the exact trace of `samples` points for a planar list (n elements, nxd and
   * nyd distinct coordinates; a sine and a cosine counted as 10 products). The Bessel values
   * are tabled once (at most MAX_BESSEL_TABLE of them), or recomputed at every trace.
   */
  static worthIt(n: number, nxd: number, nyd: number, orders: number, samples: number): boolean {
    const N = nextPow2(samples);
    const bessel = n * (orders + 1) <= MAX_BESSEL_TABLE ? 0 : n * besselSteps(orders);
    return 2 * n * (orders + 1) + bessel + N * Math.log2(N) < samples * (10 * (nxd + nyd) + n);
  }

  /** `table` false: the Bessel values recomputed at every trace (the default past MAX_BESSEL_TABLE values). */
  constructor(x: Float64Array, y: Float64Array, k: number, table?: boolean) {
    const n = (this.n = x.length);
    const [cx, cy] = centre(x, y);
    this.kx = Float64Array.from(x, (v) => k * (v - cx));
    this.ky = Float64Array.from(y, (v) => k * (v - cy));
    this.rc = new Float64Array(n);
    this.rs = new Float64Array(n);
    const L = (this.orders = CircleSeries.orderCount(x, y, k));
    this.z = new Float64Array(n);
    this.J = (table ?? n * (L + 1) <= MAX_BESSEL_TABLE) ? new Float64Array(n * (L + 1)) : null;
    this.col = new Float64Array(L + 1);
    for (let e = 0; e < n; e++) {
      const z = (this.z[e] = Math.hypot(this.kx[e]!, this.ky[e]!));
      const phi = Math.atan2(this.ky[e]!, this.kx[e]!);
      this.rc[e] = Math.cos(phi);
      this.rs[e] = -Math.sin(phi);
      if (this.J) {
        besselJ(z, L, this.col);
        this.J.set(this.col, e * (L + 1));
      }
    }
    this.ar = new Float64Array(L + 1);
    this.ai = new Float64Array(L + 1);
    this.br = new Float64Array(L + 1);
    this.bi = new Float64Array(L + 1);
  }

  /** The trace of ev's weights for beam (u0, v0) at nextPow2(samples) equal steps of α from −π, into out (as traceExact). */
  trace(ev: AfEvaluator, u0: number, v0: number, samples: number, out: HorizonTrace): void {
    const N = nextPow2(samples);
    const L = this.orders, n = this.n;
    const { kx, ky, rc, rs, ar, ai, br, bi } = this;
    ar.fill(0); ai.fill(0); br.fill(0); bi.fill(0);
    const wr = ev.wr, wi = ev.wi;
    for (let e = 0; e < n; e++) {
      const a = wr[e]!, b = wi[e]!;
      if (a === 0 && b === 0) continue;
      const t = -(kx[e]! * u0 + ky[e]! * v0);
      const c = Math.cos(t), s = Math.sin(t);
      const cr = a * c - b * s, ci = a * s + b * c;
      // A_m += c·J_m·e^{−jmφ}, B_m += c·J_m·e^{+jmφ}, the rotor advanced by e^{−jφ}
      let J: Float64Array, o: number;
      if (this.J) { J = this.J; o = e * (L + 1); }
      else { besselJ(this.z[e]!, L, this.col); J = this.col; o = 0; }
      const qc = rc[e]!, qs = rs[e]!;
      let pr = 1, pi = 0;
      for (let m = 0; m <= L; m++) {
        const jm = J[o + m]!;
        const xr = cr * jm, xi = ci * jm;
        ar[m] = ar[m]! + (xr * pr - xi * pi);
        ai[m] = ai[m]! + (xr * pi + xi * pr);
        br[m] = br[m]! + (xr * pr + xi * pi);
        bi[m] = bi[m]! + (xi * pr - xr * pi);
        const t2 = pr * qc - pi * qs;
        pi = pr * qs + pi * qc;
        pr = t2;
      }
    }
    // a_m = j^m·A_m, a_{−m} = j^m·B_m; sample i at α_i = −π + 2πi/N: F_i = Σ_m (−1)^m·a_m·e^{2πi·m·i/N},
    // the coefficients folded modulo N
    if (!this.fft || this.fft.nx !== N) {
      this.fft = new PowerFft2(N, 2, 1, { elements: N, usedCols: 1, windowCells: 0, windowSide: 0 });
      this.cells = Int32Array.from({ length: N }, (_, i) => i);
      this.fr = new Float64Array(N);
      this.fi = new Float64Array(N);
    }
    const { fr, fi } = this;
    fr.fill(0); fi.fill(0);
    for (let m = 0; m <= L; m++) {
      fold(fr, fi, m % N, m & 3, ar[m]!, ai[m]!);
      if (m > 0) fold(fr, fi, (N - (m % N)) % N, m & 3, br[m]!, bi[m]!);
    }
    const p = this.fft.run(this.cells, fr, fi);
    reserve(out, N);
    const el = ev.element;
    for (let i = 0; i < N; i++) {
      const a = -Math.PI + (2 * Math.PI * i) / N;
      const du = Math.cos(a) - u0, dv = Math.sin(a) - v0;
      push(out, du, dv, a, el ? p[i]! * el.power(u0 + du, v0 + dv) : p[i]!, p[i]!);
    }
  }
}

/** Adds (xr + j·xi)·(−j)^q into bin k of (fr, fi): (−1)^m·j^m = (−j)^m, q = m mod 4 (CircleSeries.trace). */
function fold(fr: Float64Array, fi: Float64Array, k: number, q: number, xr: number, xi: number): void {
  if (q === 0) { fr[k] = fr[k]! + xr; fi[k] = fi[k]! + xi; }
  else if (q === 1) { fr[k] = fr[k]! + xi; fi[k] = fi[k]! - xr; }
  else if (q === 2) { fr[k] = fr[k]! - xr; fi[k] = fi[k]! - xi; }
  else { fr[k] = fr[k]! - xi; fi[k] = fi[k]! + xr; }
}

function centre(x: Float64Array, y: Float64Array): [number, number] {
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (let e = 0; e < x.length; e++) {
    x0 = Math.min(x0, x[e]!); x1 = Math.max(x1, x[e]!);
    y0 = Math.min(y0, y[e]!); y1 = Math.max(y1, y[e]!);
  }
  return [0.5 * (x0 + x1), 0.5 * (y0 + y1)];
}
