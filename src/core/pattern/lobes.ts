/**
 * Main lobe, peak and peak sidelobe of one pattern (interface contract, beams.csv):
 * - the main lobe is the region around the peak nearest the commanded direction over
 *   which |AF|² falls monotonically, out to the ring of nulls or troughs around it
 *   (found by a monotone flood fill on the sampled grid);
 * - the peak and the top sidelobe candidates are refined on the exact array factor
 *   (Newton in u-v), so neither is limited by the grid; both stay in visible space (a
 *   peak is a direction): a maximum past the horizon is replaced by the maximum along it;
 * - PSL is the largest |AF|² over visible space outside the main lobe: the larger of the
 *   refined interior lobes and the maximum along the horizon circle, which is traced
 *   and searched on its own (horizon.ts), so a lobe cut off by the horizon is never
 *   missed for want of a grid cell near it.
 */
import type { AfEvaluator, PowerDerivs } from "./evaluator.js";
import type { PowerWindow } from "./grid.js";
import { alphaOf, horizonMax, inMain, notMainPeak, type HorizonMax, type HorizonTrace, type MainLobeMap } from "./horizon.js";
import { CANDIDATES, LobeGridKernel, LOBES_ALWAYS, LOBES_WITHIN } from "./lobe-kernel.js";

export interface LobeResult {
  peakDu: number;
  peakDv: number;
  peakPower: number;
  /** NaN when no visible point lies outside the main lobe (tiny arrays). */
  sidelobePower: number;
  sidelobeDu: number;
  sidelobeDv: number;
}

/** Grid hill-climb (8 neighbours, strict ascent) from cell (i, j); returns the local maximum's index. */
export function hillClimb(p: Float64Array, w: number, h: number, i: number, j: number): number {
  for (;;) {
    let bi = i, bj = j, bp = p[j * w + i]!;
    for (let dj = -1; dj <= 1; dj++)
      for (let di = -1; di <= 1; di++) {
        const a = i + di, b = j + dj;
        if (a < 0 || b < 0 || a >= w || b >= h) continue;
        if (p[b * w + a]! > bp) { bp = p[b * w + a]!; bi = a; bj = b; }
      }
    if (bi === i && bj === j) return j * w + i;
    i = bi;
    j = bj;
  }
}

/**
 * The main lobe: every cell reachable from `start` through 8-neighbour steps on which
 * |AF|² does not rise (the monotone fall out to the ring of nulls or troughs).
 * Marks `mask` (cleared here). In WebAssembly (wasm/lobes.ts, flood), on a copy of p.
 */
export function floodMainLobe(p: Float64Array, w: number, h: number, start: number, mask: Uint8Array): void {
  const k = (shared ??= new LobeGridKernel(w * h));
  k.load(p, w * h);
  k.flood(w, h, start);
  mask.set(k.mask.subarray(0, w * h));
}
let shared: LobeGridKernel | null = null;

/*
 * Every candidate gets an exact evaluation and the quadratic prediction below, whatever its
 * grid value. They were cut at 1 dB (×0.794) under the best grid candidate, on the belief
 * that a 4×-oversampled grid shows every lobe within ~0.45 dB of its peak; a lobe narrower
 * than the uniform array's (a taper and calibration errors move the nulls) loses more: a
 * 1 × 8 column at λ/2, cos⁴ element, Taylor −25 dB, calibration errors, az −60° el 29.5°
 * has a lobe 3 cells wide whose two samples sit half a cell either side of its peak, 1.2 dB
 * under it; it was never refined and PSL −18.33 dB was printed for the brute force's
 * −18.17 dB. (Ladder beams.csv unchanged; 16×16 × 4096 beams ~1 % slower.)
 */
/**
 * A contender is refined only while its predicted peak times this factor (0.086 dB) can
 * still reach the best refined value. The prediction is the vertex of the quadratic
 * model (exact value, gradient and Hessian) at the contender's start, which lies within
 * about a tenth of a cell of the peak after the parabolic fit; Newton's later steps
 * then only change the value by third-order terms. Measured on the 16² to 64² ladder
 * (7 600 contenders): the refined peak never exceeded the prediction by more than
 * 0.0004 dB, so the margin is ~200× what was needed. A start whose Newton step is longer
 * than half a cell, or where the model has no maximum, is always refined.
 */
export const QUAD_MARGIN = 1.02;

/**
 * The peak value the quadratic model of |F|² at a point predicts (value, gradient,
 * Hessian in `d`; cells du × dv); Infinity when the model has no maximum or its vertex
 * is more than half a cell away (then only a full refinement can tell).
 */
export function quadraticPeak(ev: AfEvaluator, d: PowerDerivs, du: number, dv: number): number {
  let v: number;
  if (ev.lockU || ev.lockV) {
    if (ev.lockU && ev.lockV) return d.p;
    const g = ev.lockV ? d.pu : d.pv, h = ev.lockV ? d.puu : d.pvv, c = ev.lockV ? du : dv;
    if (!(h < 0) || Math.abs(g / h) > 0.5 * c) return Infinity;
    v = d.p - (g * g) / (2 * h);
  } else {
    const det = d.puu * d.pvv - d.puv * d.puv;
    if (!(d.puu < 0 && det > 0)) return Infinity;
    const su = -(d.pvv * d.pu - d.puv * d.pv) / det;
    const sv = -(-d.puv * d.pu + d.puu * d.pv) / det;
    if (Math.hypot(su / du, sv / dv) > 0.5) return Infinity;
    v = d.p + 0.5 * (d.pu * su + d.pv * sv);
  }
  return Number.isFinite(v) ? v : Infinity;
}

/** Which window coordinate a line array's pattern varies along (None: a planar array's varies along both); the scan's `line`. */
const enum LineAxis { None, Columns, Rows }

export class LobeFinder {
  /** the window's copy for the flood and the candidate scan, the main-lobe mask and the candidates (wasm/lobes.ts) */
  private readonly grid: LobeGridKernel;
  /** per contender: start (Δu, Δv) and the exact p, pu, pv, puu, pvv, puv there */
  private readonly st = new Float64Array(8 * CANDIDATES);
  private readonly pred = new Float64Array(CANDIDATES);
  private readonly ord = new Int32Array(LOBES_ALWAYS);
  private readonly off = new Float64Array(2);
  private readonly d0: PowerDerivs = { p: 0, pu: 0, pv: 0, puu: 0, pvv: 0, puv: 0 };
  /** QUAD_MARGIN; Infinity refines every contender (the tests compare both) */
  quadMargin = QUAD_MARGIN;
  private readonly hz: HorizonMax = { p: NaN, du: NaN, dv: NaN };
  /** the main lobe for horizonMax: the window's mask; off the window is not main lobe */
  private readonly lobe: MainLobeMap = { mask: new Uint8Array(0), m0: 0, n0: 0, w: 0, h: 0, du: 1, dv: 1, outside: false, visible: null, u0: 0, v0: 0, peakDu: NaN, peakDv: NaN, lockU: false, lockV: false };
  constructor(cap: number) {
    this.grid = new LobeGridKernel(cap);
  }

  /**
   * The main-lobe peak alone (steps 1–2 of analyse): the grid peak nearest the
   * commanded direction, refined on the exact pattern and kept in visible space; with an
   * element pattern, when the grid climb left d̂'s cell, the exact climb of nearestPeak
   * (the grid's samples can rise across a dip). `top` is its grid cell (the cell of the
   * peak, where the main lobe's flood starts).
   */
  peak(win: PowerWindow, ev: AfEvaluator, du: number, dv: number, u0: number, v0: number): Refined & { top: number } {
    const { wm, wn, p } = win;
    // 1. grid peak nearest the commanded direction: hill-climb from Δ = 0
    const top = hillClimb(p, wm, wn, -win.m0, -win.n0);
    const i = top % wm;
    const j = (top - i) / wm;
    // 2. exact peak (a line array keeps the commanded value across its normal plane)
    const [oi, oj] = parabolic(p, wm, wn, i, j);
    const pk = refine(ev, ev.lockU ? 0 : (win.m0 + i + oi) * du, ev.lockV ? 0 : (win.n0 + j + oj) * dv, du, dv, { u0, v0 });
    // 2b. with an element pattern the climb may have stepped over a dip (see nearestPeak)
    if (!ev.element || top === -win.n0 * wm - win.m0) return { ...pk, top };
    const near = nearestPeak(ev, du, dv, u0, v0, pk);
    if (near === pk) return { ...pk, top };
    return { ...near, top: cellOf(win, near.du / du, near.dv / dv) };
  }

  /** Contender k's start (the parabolic fit on the grid, kept in the disc), its exact value, gradient and Hessian there (st) and its predicted peak (pred). */
  private predict(k: number, win: PowerWindow, ev: AfEvaluator, du: number, dv: number, u0: number, v0: number): void {
    const { wm, wn, p } = win;
    const q = this.grid.cand[k]!;
    const a = q % wm;
    const b = (q - a) / wm;
    parabolic(p, wm, wn, a, b, this.off);
    let su = (win.m0 + a + this.off[0]!) * du, sv = (win.n0 + b + this.off[1]!) * dv;
    if ((u0 + su) ** 2 + (v0 + sv) ** 2 > 1) { su = (win.m0 + a) * du; sv = (win.n0 + b) * dv; }
    const d = ev.derivs(su, sv);
    const st = this.st, o = 8 * k;
    st[o] = su; st[o + 1] = sv;
    st[o + 2] = d.p; st[o + 3] = d.pu; st[o + 4] = d.pv; st[o + 5] = d.puu; st[o + 6] = d.pvv; st[o + 7] = d.puv;
    this.pred[k] = Math.max(quadraticPeak(ev, d, du, dv), this.grid.candP[k]!);
  }

  /** `trace`: the pattern along the horizon (horizon.ts), taken from the same weights as `win`. */
  analyse(win: PowerWindow, ev: AfEvaluator, du: number, dv: number, u0: number, v0: number, trace: HorizonTrace): LobeResult {
    const { wm, wn, p, visible } = win;
    const pk = this.peak(win, ev, du, dv, u0, v0);
    const top = pk.top;
    // 3. main lobe: monotone flood fill from the grid peak (floodMainLobe)
    const g = this.grid;
    g.load(p, wm * wn, visible);
    g.flood(wm, wn, top);
    const mask = g.mask;
    // 4. sidelobe candidates: the CANDIDATES largest local maxima (8-neighbourhood) of the
    // visible cells outside the main lobe (the contenders among them: LOBES_WITHIN, 4b).
    // Once CANDIDATES are held, a cell not above the smallest of them cannot enter. A line
    // array's pattern is the same in every window row (a row array, one distinct y: it
    // varies along u, window columns) or column (a column array): one candidate per
    // coordinate along the line, or the copies of its largest lobe fill every place.
    const line = ev.lockU === ev.lockV ? LineAxis.None : ev.lockV ? LineAxis.Columns : LineAxis.Rows;
    const nc = g.scan(wm, wn, line);
    const { cand, candP } = g;
    // the main lobe as the refined points and the horizon see it (horizon.ts inMain); an
    // element-weighted window is 0 past the horizon, so there its rim's mask is not used
    const lobe = this.lobe;
    lobe.mask = mask; lobe.m0 = win.m0; lobe.n0 = win.n0; lobe.w = wm; lobe.h = wn; lobe.du = du; lobe.dv = dv;
    lobe.visible = ev.element ? visible : null; lobe.u0 = u0; lobe.v0 = v0; lobe.peakDu = pk.du; lobe.peakDv = pk.dv; lobe.lockU = ev.lockU; lobe.lockV = ev.lockV;
    let sl = NaN, sdu = NaN, sdv = NaN;
    const bestGrid = nc > 0 ? candP[0]! : 0;
    // 4b. the contenders: the LOBES_ALWAYS largest maxima, then the others in decreasing grid
    // value while a lobe's peak, at most 1/LOBES_WITHIN above its largest sample, could
    // still exceed both the largest sample and the best refined value so far. One exact
    // evaluation (value, gradient, Hessian) at each contender's start predicts its peak
    // (the vertex of the quadratic model there); the first LOBES_ALWAYS are refined in
    // decreasing prediction, each later one as it comes, and a contender whose prediction
    // (with QUAD_MARGIN) cannot reach the best refined value so far is not refined
    // (the scan leaves the candidates in decreasing grid value)
    const { st, pred, ord } = this;
    const first = Math.min(nc, LOBES_ALWAYS);
    for (let k = 0; k < first; k++) { this.predict(k, win, ev, du, dv, u0, v0); ord[k] = k; }
    // the first ones in decreasing prediction
    for (let x = 1; x < first; x++) for (let y = x; y > 0 && pred[ord[y]!]! > pred[ord[y - 1]!]!; y--) { const t = ord[y]!; ord[y] = ord[y - 1]!; ord[y - 1] = t; }
    for (let x = 0; x < nc; x++) {
      const k = x < first ? ord[x]! : x;
      if (x >= first) {
        if (!(candP[k]! >= LOBES_WITHIN * bestGrid) || candP[k]! < LOBES_WITHIN * sl) break;
        this.predict(k, win, ev, du, dv, u0, v0);
      }
      if (pred[k]! * this.quadMargin < sl) continue;
      const q = cand[k]!;
      const a = q % wm;
      const b = (q - a) / wm;
      const o = 8 * k;
      const d0 = this.d0;
      d0.p = st[o + 2]!; d0.pu = st[o + 3]!; d0.pv = st[o + 4]!; d0.puu = st[o + 5]!; d0.pvv = st[o + 6]!; d0.puv = st[o + 7]!;
      const r = refine(ev, st[o]!, st[o + 1]!, du, dv, { u0, v0 }, d0, true);
      // the refined point must stay outside the main lobe; otherwise keep the grid value
      // + 0: no −0 from Math.round reaches an index (see inMain, horizon.ts)
      const ra = Math.round(r.du / du) + 0 - win.m0;
      const rb = Math.round(r.dv / dv) + 0 - win.n0;
      let inside = ra >= 0 && rb >= 0 && ra < wm && rb < wn && (lobe.visible && !visible[rb * wm + ra] ? inMain(lobe, r.du, r.dv) : mask[rb * wm + ra] === 1);
      // The flood can run one cell past a null (the cell beyond it still lower than the one
      // before), so a sidelobe's peak can round to a main-lobe cell: a strict local maximum
      // more than half a cell from the main peak is a sidelobe whatever its cell says (no
      // local maximum but the peak lies in the monotone flood from it). 1 × 8 column at λ/2,
      // cos^4 element, calibration errors, az 60° el 10°: the lobe at v = −0.231 rounded into
      // the flood's overshoot and its grid cell's −27.67 dB was printed; brute force −26.22 dB.
      if (inside && r.p > 0 && notMainPeak(ev, lobe, r.du, r.dv) && strictMax(ev, r.du, r.dv, du, dv)) inside = false;
      let val = r.p, vu = r.du, vv = r.dv;
      if (inside || !(r.p >= candP[k]!)) { val = candP[k]!; vu = (win.m0 + a) * du; vv = (win.n0 + b) * dv; }
      if (!(val <= sl)) { sl = val; sdu = vu; sdv = vv; }
    }
    // 4d. with an element pattern, lobes a planar array's flood took whole: |AF|²·E can dip
    // and rise again within a cell, so that no sample shows the trough. One exact
    // evaluation (value, gradient, Hessian) at each flooded cell inside the rim, a cell or
    // more from the peak, tells whether a local maximum other than the main peak may lie
    // near: the pattern there rises away from the main peak (a jittered 2 × 2 list, cos^3.12,
    // boresight: no PSL printed, brute force −19.09 dB), or the quadratic model of ln|F|²
    // there has its maximum within a cell of it and away from the main peak (nearOtherMax):
    // a lobe whose trough lies within a cell of it, so that no flooded cell rises toward it
    // (11 × 3 triangular, cos^0.52, boresight: −30.44 dB printed, −26.04 dB behind a 0.3 dB
    // trough between two rows of cells), or one narrower than half a cell between a null and
    // the element's fall (3 × 5 list, cos^7.9: none printed for −71.33 dB). The climb from
    // there is a sidelobe if it ends on a strict local maximum away from the main peak.
    // A 32 × 32 cos^1.2 analysis: the evaluations ~12 % longer; the model's climbs (0.3 an
    // analysis there) ~2 % more. Not looked for: a flooded lobe whose cells within a cell
    // are all on the flood's rim (climbing from the rim tripled that analysis; the
    // candidates hold the lobes just outside it), or where the model at each has no maximum
    // within a cell (brute-force campaigns, 254 + 50 random scenarios: none found). From a
    // flooded cell on the edge of visible space the strip out to the horizon is sampled
    // too (stripClimb, below).
    // a strict local maximum of the exact pattern away from the main peak (whatever the mask says) is a sidelobe
    const take = (r: Refined | null) => {
      if (r && r.p > 0 && !(r.p <= sl) && notMainPeak(ev, lobe, r.du, r.dv) && strictMax(ev, r.du, r.dv, du, dv)) { sl = r.p; sdu = r.du; sdv = r.dv; }
    };
    if (ev.element && ev.lockU === ev.lockV) {
      for (let q = 0; q < wm * wn; q++) {
        if (mask[q] !== 1 || !visible[q] || q === top) continue;
        const a = q % wm, b = (q - a) / wm;
        // inside the flood, not on its rim: a rim cell past the trough (the flood can run a
        // cell past it) rises toward a lobe outside the flood, which the candidates hold
        if (!floodInterior(mask, visible, wm, wn, a, b)) continue;
        const cu = (win.m0 + a) * du, cv = (win.n0 + b) * dv;
        const ru = cu - pk.du, rv = cv - pk.dv;
        if (Math.hypot(ru / du, rv / dv) < 1) continue;
        // at the edge of visible space: the strip between this cell and the horizon, which
        // no cell samples (a lobe there is missed when the cell's row lies on a null, so that
        // the flood ran through it: 6 × 2 lattice at 0.754 × 0.531 λ, cos^0.98, Taylor −35 dB,
        // boresight: −34.60 dB printed, brute force −30.18 dB at v = ±0.9885, the rows' null
        // being the cells' row v = 0.9416)
        if (touchesHorizon(visible, wm, wn, a, b)) take(stripClimb(ev, u0, v0, cu, cv, du, dv));
        const d = ev.derivs(cu, cv);
        if (!(d.pu * ru + d.pv * rv > 0) && !nearOtherMax(d, ru, rv, du, dv)) continue;
        // refine reads its start before it evaluates again
        take(refine(ev, cu, cv, du, dv, { u0, v0 }, d, true));
      }
    }
    // 4c. lobes a line array's flood took whole (lineFloodLobes), and with an element
    // pattern the ends of the cut's chord (chordEnds)
    if (ev.lockU !== ev.lockV) {
      const c = lineFloodLobes(win, ev, lobe, top, u0, v0, du, dv);
      if (c.p > sl || (Number.isNaN(sl) && c.p > 0)) { sl = c.p; sdu = c.du; sdv = c.dv; }
      if (ev.element) {
        const e = chordEnds(ev, lobe, u0, v0, du, dv);
        if (e.p > sl || (Number.isNaN(sl) && e.p > 0)) { sl = e.p; sdu = e.du; sdv = e.dv; }
      }
    }
    // 5. the horizon, searched along the circle
    const h = horizonMax(trace, ev, u0, v0, lobe, bestGrid, this.hz, sl / this.quadMargin);
    if (h.p > sl || (Number.isNaN(sl) && h.p > 0)) { sl = h.p; sdu = h.du; sdv = h.dv; }
    // 6. with an element pattern: lobes in the rim between the outermost cells and the horizon (rimClimbs)
    if (ev.element && ev.lockU === ev.lockV && trace.hasAf) rimClimbs(trace, ev, u0, v0, du, dv, LOBES_WITHIN * Math.max(sl > 0 ? sl : 0, bestGrid), take);
    return { peakDu: pk.du, peakDv: pk.dv, peakPower: pk.p, sidelobePower: sl, sidelobeDu: sdu, sidelobeDv: sdv };
  }
}

interface Refined { du: number; dv: number; p: number }

/** Cells before each end of a line array's chord sampled as its flood is (chordEnds). */
const CHORD_END_CELLS = 1.5;
/** Exact samples a grid cell over a line array's main-lobe flood (lineFloodLobes), and at most this many in all. */
const LINE_SAMPLES_PER_CELL = 32;
const LINE_SAMPLES_MAX = 8192;
/**
 * A line array's main-lobe flood can take a whole lobe: past a null the next sample is
 * still lower than the last one before it, and the lobe peaks and falls before the sample
 * after, so that no cell outside the flood shows it. It happens at the first nulls (1 × 7
 * column at 0.67 λ, cos⁸, Taylor, calibration errors, az −73.13° el 7.6°: a −34.69 dB lobe,
 * numpy brute force, absorbed; −79.69 dB printed) and where a cosine element falls to 0 at
 * the end of the visible chord (1 × 10 column at 0.6 λ, cos⁸, az 84.3° el 4.3°: a −42.15 dB
 * lobe and no PSL printed). The cut is one-dimensional, so the flood's run along the line
 * (one cell more each side, within the line's [−1, 1]) is sampled exactly,
 * LINE_SAMPLES_PER_CELL a cell (16 missed lobes of −62 and −66 dB close to a chord's end),
 * and every sampled maximum other than the main peak is climbed by golden section.
 * Returns the highest (p NaN: none).
 */
function lineFloodLobes(win: PowerWindow, ev: AfEvaluator, lobe: MainLobeMap, top: number, u0: number, v0: number, du: number, dv: number): Refined {
  const { wm, wn, visible } = win;
  const mask = lobe.mask;
  const alongV = ev.lockU; // a column: the pattern varies along v (window rows)
  const best: Refined = { du: NaN, dv: NaN, p: NaN };
  const ti = top % wm, tj = (top - ti) / wm;
  const cells = alongV ? wn : wm, across = alongV ? wm : wn;
  // a coordinate along the line is in the flood when a visible cell at it is (the same pattern at every one)
  const flooded = (k: number): boolean => {
    for (let a = 0; a < across; a++) {
      const q = alongV ? k * wm + a : a * wm + k;
      if (visible[q] && mask[q]) return true;
    }
    return false;
  };
  let lo = alongV ? tj : ti, hi = lo;
  while (lo > 0 && flooded(lo - 1)) lo--;
  while (hi + 1 < cells && flooded(hi + 1)) hi++;
  const cell = alongV ? dv : du, t0 = alongV ? v0 : u0, k0 = alongV ? win.n0 : win.m0;
  // Δ along the line, one cell past the run each side, within t0 + Δ ∈ [−1, 1]
  const a0 = Math.max((k0 + lo - 1) * cell, -1 - t0), a1 = Math.min((k0 + hi + 1) * cell, 1 - t0);
  if (!(a1 > a0)) return best;
  const n = Math.min(LINE_SAMPLES_MAX, Math.ceil(((a1 - a0) / cell) * LINE_SAMPLES_PER_CELL));
  lineStretchMax(ev, lobe, a0, a1, n, cell, best);
  return best;
}

/**
 * A line array's pattern sampled exactly at n equal steps over Δ ∈ [a0, a1] along its
 * line; every sampled interior maximum is climbed by golden section (to 1e-9 cell), and
 * the highest more than half a cell from the main peak is kept in `best` if higher.
 */
function lineStretchMax(ev: AfEvaluator, lobe: MainLobeMap, a0: number, a1: number, n: number, cell: number, best: Refined): void {
  const alongV = ev.lockU;
  const step = (a1 - a0) / n;
  const at = (x: number) => ev.power(alongV ? 0 : x, alongV ? x : 0);
  const g = (Math.sqrt(5) - 1) / 2;
  let prev = at(a0), cur = at(a0 + step);
  for (let s = 1; s < n; s++) {
    const next = at(a0 + (s + 1) * step);
    if (cur > prev && cur >= next) {
      let a = a0 + (s - 1) * step, b = a0 + (s + 1) * step;
      let c = b - g * (b - a), d = a + g * (b - a), fc = at(c), fd = at(d);
      for (let k = 0; k < 40 && b - a > 1e-9 * cell; k++) {
        if (fc >= fd) { b = d; d = c; fd = fc; c = b - g * (b - a); fc = at(c); }
        else { a = c; c = d; fc = fd; d = a + g * (b - a); fd = at(d); }
      }
      const m = fc >= fd ? c : d, pm = Math.max(fc, fd);
      const mdu = alongV ? 0 : m, mdv = alongV ? m : 0;
      if (pm > 0 && notMainPeak(ev, lobe, mdu, mdv) && !(pm <= best.p)) { best.p = pm; best.du = mdu; best.dv = mdv; }
    }
    prev = cur;
    cur = next;
  }
}

/**
 * A line array with an element pattern takes E on the cut through the commanded
 * direction out to the end of its chord, t = ±√(1 − c0²) along the line (c0 the
 * commanded coordinate across it), and along the horizon past it (element.ts
 * LineCutPattern): the pattern has a kink there, and where it rises toward the end from
 * both sides the end is a local maximum, however shallow the trough before it, that no
 * smooth search finds. 12 × 1 row at 0.479 λ, a tabulated element rising 2.9 dB toward
 * the horizon, optimized codes, az 63.0° el −10.0°: the pattern falls from the main peak
 * (u = 0.870) to −4.840 dB at u = 0.98449 and rises to −4.786 dB at the chord's end
 * u = 0.98490; PSL −16.11 dB was printed, brute force −4.78 dB (found by a random search
 * against it). Each end is evaluated with a point 1e-7 either side; it counts if it is
 * at least as high as both and lies more than half a cell from the main peak. And where a
 * table falls steeply onto the horizon the product can peak just inside the end, between
 * the last grid cell and it, far above both: 6 × 1 row at 0.835 λ, table falling 25 dB
 * from θ = 88° to 90°, Chebyshev −22 dB, az 0.9° el 17.6°: the ideal PSL printed −21.47 dB,
 * brute force −20.94 dB at u = −0.9528, 0.0007 inside the end. So the last
 * CHORD_END_CELLS cells before each end are sampled as the flood's run is
 * (lineStretchMax, LINE_SAMPLES_PER_CELL a cell). Returns the highest (p NaN: none).
 */
function chordEnds(ev: AfEvaluator, lobe: MainLobeMap, u0: number, v0: number, du: number, dv: number): Refined {
  const best: Refined = { du: NaN, dv: NaN, p: NaN };
  const row = ev.lockV, t0 = row ? u0 : v0, c0 = row ? v0 : u0, cell = row ? du : dv;
  const h = Math.sqrt(Math.max(0, 1 - c0 * c0));
  if (!(h > 1e-6)) return best;
  const at = (t: number) => ev.power(row ? t - t0 : 0, row ? 0 : t - t0);
  const span = Math.min(CHORD_END_CELLS * cell, h);
  const n = Math.ceil((span / cell) * LINE_SAMPLES_PER_CELL);
  lineStretchMax(ev, lobe, -h - t0, -h + span - t0, n, cell, best);
  lineStretchMax(ev, lobe, h - span - t0, h - t0, n, cell, best);
  // and the last of those steps again, LINE_SAMPLES_PER_CELL times finer: a table's
  // interpolant next to a fall onto the horizon can bump within it (2 × 1 row at 0.508 λ,
  // a table +8.7 dB at 87° and −15.7 dB at 90°: a maximum 0.05 dB over its trough 0.002
  // inside the end, −11.48 dB, and −25.72 dB printed)
  const last = span / n;
  lineStretchMax(ev, lobe, -h - t0, -h + last - t0, LINE_SAMPLES_PER_CELL, cell, best);
  lineStretchMax(ev, lobe, h - last - t0, h - t0, LINE_SAMPLES_PER_CELL, cell, best);
  for (const end of [-h, h]) {
    const pe = at(end), s = Math.sign(end);
    if (!(pe > 0) || at(end - s * 1e-7) > pe || at(end + s * 1e-7) > pe) continue;
    const ed = end - t0, edu = row ? ed : 0, edv = row ? 0 : ed;
    if (notMainPeak(ev, lobe, edu, edv) && !(pe <= best.p)) { best.p = pe; best.du = edu; best.dv = edv; }
  }
  return best;
}

/**
 * The quadratic model of ln |F|² at a point (exact value, gradient and Hessian `d`; the
 * point lies (ru, rv) from the main peak; cells du × dv) has a maximum within one cell of
 * the point and more than half a cell from the main peak: a local maximum of the pattern
 * other than the main peak may lie near (step 4d climbs to see). A grid point lies within
 * 0.71 cell of any lobe's peak. The log is modelled rather than |F|² because a lobe is
 * (nearly) log-concave between its nulls — a uniform array's factor |sin Nx / sin x| is,
 * and so is a cosine element (1 − u² − v²)^(q/2) — so that the model points at the peak
 * from farther down its flanks than the model of |F|², which is concave only near the
 * peak. 11 × 3 triangular, cos^0.52: from the cells 0.71 and 0.52 cell from the lobe's
 * peak the model's maximum lies within 0.12 cell of it; 3 × 5 list, cos^7.9: from the cell
 * 0.11 cell away, within 0.02 cell.
 */
function nearOtherMax(d: PowerDerivs, ru: number, rv: number, du: number, dv: number): boolean {
  if (!(d.p > 0)) return false;
  const lu = d.pu / d.p, lv = d.pv / d.p;
  const luu = d.puu / d.p - lu * lu, lvv = d.pvv / d.p - lv * lv, luv = d.puv / d.p - lu * lv;
  const det = luu * lvv - luv * luv;
  if (!(luu < 0 && det > 0)) return false;
  const su = -(lvv * lu - luv * lv) / det, sv = -(-luv * lu + luu * lv) / det;
  return Math.hypot(su / du, sv / dv) <= 1 && Math.hypot((ru + su) / du, (rv + sv) / dv) > 0.5;
}

/** Cell (a, b) has an invisible 8-neighbour (it is on the edge of visible space). */
function touchesHorizon(visible: Uint8Array, wm: number, wn: number, a: number, b: number): boolean {
  for (let y = Math.max(0, b - 1); y <= Math.min(wn - 1, b + 1); y++)
    for (let x = Math.max(0, a - 1); x <= Math.min(wm - 1, a + 1); x++)
      if (!visible[y * wm + x]) return true;
  return false;
}

/** Exact samples stripClimb takes between an edge cell and the horizon, along the radius. */
const STRIP_SAMPLES = 4;

/**
 * From an edge cell (cu, cv): the exact pattern at STRIP_SAMPLES points along the radius
 * out to just inside the horizon; where one is higher than the cell, the climb from the
 * highest (refine). null when none is.
 */
function stripClimb(ev: AfEvaluator, u0: number, v0: number, cu: number, cv: number, du: number, dv: number): Refined | null {
  const U = u0 + cu, V = v0 + cv, R = Math.hypot(U, V);
  if (!(R > 0 && R < 1)) return null;
  return radialClimb(ev, u0, v0, U, V, R, R, 1 - 1e-9, 1, STRIP_SAMPLES, ev.power(cu, cv), du, dv);
}

/**
 * The exact pattern along the radius through (U, V) (at radius R from the origin) at
 * r = from + (to − from)·k/steps, k = k0 … steps; where one sample is higher than `above`,
 * the climb from the highest (the first of equals; refine), null when none is or the
 * climb ends at 0 (stripClimb, rimClimbs).
 */
function radialClimb(ev: AfEvaluator, u0: number, v0: number, U: number, V: number, R: number, from: number, to: number, k0: number, steps: number, above: number, du: number, dv: number): Refined | null {
  let best = above, bu = NaN, bv = NaN;
  for (let k = k0; k <= steps; k++) {
    const rr = from + ((to - from) * k) / steps;
    const su = (U * rr) / R - u0, sv = (V * rr) / R - v0;
    const p = ev.power(su, sv);
    if (p > best) { best = p; bu = su; bv = sv; }
  }
  if (Number.isNaN(bu)) return null;
  const r = refine(ev, bu, bv, du, dv, { u0, v0 }, null, true);
  return r.p > 0 ? r : null;
}

/**
 * Lobes of an element-weighted pattern in the rim between the outermost visible cells and
 * the horizon, which neither the grid nor the horizon trace shows. Where the element falls
 * steeply onto the horizon (a cosine's is 0 there) the product |AF|²·E can peak in that
 * rim while both its last cell and its horizon sample lie far below the peak: a grating
 * lobe's flank rising toward the horizon met by the element's fall (9 × 8 lattice at
 * 0.796 × 0.602 λ as elements.csv, cos^0.89, Dolph–Chebyshev −37 dB, az 2.64° el 0.29°:
 * the ideal PSL printed −37.10 dB, brute force −35.17 dB at u = −0.995; the last cell
 * 0.022 inward showed −46.98 dB and the horizon 0).
 *
 * Every cell box holds a visible grid point, so the rim is at most a cell diagonal deep:
 * r ∈ [r_in, 1], r_in = 1 − hypot(du, dv). Along each local maximum of the trace's |AF|²
 * alone (trace.af; main-lobe samples excluded) the rim's product is at most
 * |AF|²(horizon) × the largest E in the rim where |AF|² rises outward through the rim; a
 * lobe of |AF|² peaking inside the rim is at least ~4 cells wide and stands less than
 * 3 dB above the horizon (as a grid lobe above its nearest sample). Where that bound
 * reaches `bar` (LOBES_WITHIN of the best so far) the pattern is sampled at RIM_SAMPLES
 * points along the radius through the rim and the best is climbed (refine); `take` keeps
 * the climb if it ends on a strict local maximum away from the main peak.
 */
function rimClimbs(t: HorizonTrace, ev: AfEvaluator, u0: number, v0: number, du: number, dv: number, bar: number, take: (r: Refined | null) => void): void {
  const n = t.n, af = t.af, main = t.main, el = ev.element!;
  if (n < 3) return;
  const rIn = Math.max(0, 1 - Math.hypot(du, dv));
  for (let i = 0; i < n; i++) {
    if (main[i]) continue;
    const a = af[i]!, al = af[(i - 1 + n) % n]!, ar = af[(i + 1) % n]!;
    if (!(a > 0) || al > a || ar > a || (al === a && ar === a)) continue;
    const ai = alphaOf(t, i), c = Math.cos(ai), s = Math.sin(ai);
    const eMax = Math.max(el.power(rIn * c, rIn * s), el.power(c, s));
    if (!(a * eMax >= bar)) continue;
    take(radialClimb(ev, u0, v0, c, s, 1, 1 - 1e-9, rIn, 0, RIM_SAMPLES, 0, du, dv));
  }
}

/** Exact samples rimClimbs takes along a radius through the rim (the horizon and its inner edge included). */
const RIM_SAMPLES = 4;

/** Every visible 8-neighbour of cell (a, b) is in the flood (`mask`); the window's edge counts as inside. */
function floodInterior(mask: Uint8Array, visible: Uint8Array, wm: number, wn: number, a: number, b: number): boolean {
  for (let y = Math.max(0, b - 1); y <= Math.min(wn - 1, b + 1); y++)
    for (let x = Math.max(0, a - 1); x <= Math.min(wm - 1, a + 1); x++)
      if (visible[y * wm + x] && mask[y * wm + x] !== 1) return false;
  return true;
}

/**
 * (Δu, Δv) is a strict local maximum of the exact pattern, as a converged `refine` leaves
 * it: gradient below 1e-4 of the value per cell, curvature negative (a line array: along
 * its line only). A point stopped on a flank or at the horizon is not.
 */
function strictMax(ev: AfEvaluator, du: number, dv: number, cu: number, cv: number): boolean {
  const d = ev.derivs(du, dv);
  if (!(d.p > 0)) return false;
  if (ev.lockU && ev.lockV) return false;
  if (ev.lockV) return Math.abs(d.pu) * cu < 1e-4 * d.p && d.puu < 0;
  if (ev.lockU) return Math.abs(d.pv) * cv < 1e-4 * d.p && d.pvv < 0;
  return Math.abs(d.pu) * cu + Math.abs(d.pv) * cv < 1e-4 * d.p && d.puu < 0 && d.puu * d.pvv - d.puv * d.puv > 0;
}

/**
 * The main-lobe peak as LobeFinder.peak finds it, without a sampled window: the same
 * grid (cells Δ = (m·du, n·dv), the window's bounds for beam (u0, v0)), the same
 * hill-climb from Δ = 0 and parabolic start, but every cell it visits is evaluated
 * exactly on demand (the evaluator's total pattern; an FFT cell is the same sample).
 * Used where only the peak is wanted (the band analysis): a few dozen evaluations
 * instead of a whole pattern. `gridPower(m, n)` is the total pattern at cell (m, n);
 * a caller that knows it more cheaply (check's pull prediction: a planar array's
 * ideal |AF|² does not depend on the beam) passes the same values its own way.
 * With an element pattern and a climb that left d̂'s cell, the peak is nearestPeak's, as in
 * LobeFinder.peak (`work.evaluations` counts its exact evaluations).
 */
export function peakOnDemand(ev: AfEvaluator, du: number, dv: number, u0: number, v0: number, gridPower: (m: number, n: number) => number = (m, n) => ev.power(m * du, n * dv), work?: { evaluations: number }): Refined {
  const mLo = Math.floor((-1 - u0) / du) - 1, mHi = Math.floor((1 - u0) / du) + 1;
  const nLo = Math.floor((-1 - v0) / dv) - 1, nHi = Math.floor((1 - v0) / dv) + 1;
  const seen = new Map<number, number>();
  const W = mHi - mLo + 1;
  const at = (m: number, n: number): number => {
    if (m < mLo || m > mHi || n < nLo || n > nHi) return NaN;
    const key = (n - nLo) * W + (m - mLo);
    let v = seen.get(key);
    if (v === undefined) seen.set(key, (v = gridPower(m, n)));
    return v;
  };
  let i = 0, j = 0;
  for (;;) {
    let bi = i, bj = j, bp = at(i, j);
    for (let dj = -1; dj <= 1; dj++)
      for (let di = -1; di <= 1; di++) {
        const v = at(i + di, j + dj);
        if (v > bp) { bp = v; bi = i + di; bj = j + dj; }
      }
    if (bi === i && bj === j) break;
    i = bi;
    j = bj;
  }
  const lg = (m: number, n: number) => Math.log(at(m, n) + 1e-300);
  const c = lg(i, j);
  const oi = parabolaOffset(lg(i - 1, j), c, lg(i + 1, j)), oj = parabolaOffset(lg(i, j - 1), c, lg(i, j + 1));
  const pk = refine(ev, ev.lockU ? 0 : (i + oi) * du, ev.lockV ? 0 : (j + oj) * dv, du, dv, { u0, v0 });
  // with an element pattern the climb may have stepped over a dip (see nearestPeak)
  return ev.element && (i !== 0 || j !== 0) ? nearestPeak(ev, du, dv, u0, v0, pk, work) : pk;
}

/**
 * The visible window cell nearest the offset (fu, fv) in cells: the main lobe's flood
 * starts there (an element-weighted window is 0 past the horizon, so a cell there would
 * flood nothing: the highest visible cell of its 3 × 3 then).
 */
function cellOf(win: PowerWindow, fu: number, fv: number): number {
  const { wm, wn, visible, p } = win;
  const clampI = (x: number, n: number) => Math.max(0, Math.min(n - 1, x));
  const a = clampI(Math.round(fu) + 0 - win.m0, wm), b = clampI(Math.round(fv) + 0 - win.n0, wn);
  if (visible[b * wm + a]) return b * wm + a;
  let best = b * wm + a, bp = -1;
  for (let y = Math.max(0, b - 1); y <= Math.min(wn - 1, b + 1); y++)
    for (let x = Math.max(0, a - 1); x <= Math.min(wm - 1, a + 1); x++)
      if (visible[y * wm + x] && p[y * wm + x]! > bp) { bp = p[y * wm + x]!; best = y * wm + x; }
  return best;
}

/** Points nearestPeak looks at inside a step whose ends suggest a dip. */
const SUBSTEPS = 8;

/**
 * Whether log P may dip between two points of a rising step (values and derivatives
 * `a`, `b`, step (su, sv)): the cubic Hermite through both ends' log-values and
 * log-slopes along the step has a critical point inside. A rising step can hide a
 * maximum and the dip past it only when the pattern climbs faster at both ends than on
 * the whole (8 × 8, cos^100 θ, az −85°, realized: slopes 1.3 and 10.7 per step at the ends,
 * a rise of 0.35).
 */
function dipBetween(a: PowerDerivs, b: PowerDerivs, su: number, sv: number): boolean {
  const m0 = (a.pu * su + a.pv * sv) / a.p, m1 = (b.pu * su + b.pv * sv) / b.p;
  const rise = Math.log(b.p / a.p);
  // f(t) = rise·(3t² − 2t³) + m0·(t − 2t² + t³) + m1·(t³ − t²); f'(t) = A + 2Bt + 3Ct²
  const A = m0, B = 3 * rise - 2 * m0 - m1, C = m0 + m1 - 2 * rise;
  if (!Number.isFinite(A + B + C)) return true;
  const fp = (t: number) => A + 2 * B * t + 3 * C * t * t;
  if (C !== 0) {
    const tv = -B / (3 * C);
    if (tv > 0 && tv < 1 && !(fp(tv) > 0)) return true;
  }
  return false;
}

/** Steps of nearestPeak's climb, in cells: a fraction of the distance between a lobe's peak and the dip past it. */
const CLIMB_STEP = 0.25;

/**
 * The total pattern's local maximum nearest the commanded direction (interface contract:
 * the main lobe is the region around the peak nearest d̂), climbed on the exact pattern
 * from Δ = 0. With a steep element pattern E the total pattern |AF|²·E can rise by 20 dB
 * a cell, and its lobes' peaks crowd against the dips past them (8 × 8 at λ/2, cos^100 θ,
 * az −85°: the peak nearest d̂ lies 0.19 cell before the null): the grid's samples rise
 * from cell to cell across the dip and the grid climb ran on to a lobe farther out (53.16°
 * away where numpy's nearest local maximum is 35.72° away). The climb here follows the
 * exact gradient (in cell units) in steps of CLIMB_STEP cell and stops where the pattern
 * stops rising along the step (value or slope), then refines there. `grid`: the peak the
 * grid climb found, returned itself when the climb ends on it (to 1e-3 cell), so a beam
 * whose grid climb was right keeps its numbers to the last digit.
 * Used only with an element pattern, after a grid climb that left d̂'s cell: isotropic
 * elements and beams that stay home cost nothing more.
 */
export function nearestPeak(ev: AfEvaluator, cu: number, cv: number, u0: number, v0: number, grid: Refined, work?: { evaluations: number }): Refined {
  const disc = { u0, v0 };
  const inDisc = (a: number, b: number) => (u0 + a) ** 2 + (v0 + b) ** 2 <= 1;
  let du = 0, dv = 0;
  let d = { ...ev.derivs(0, 0) };
  const maxSteps = Math.ceil((4 / CLIMB_STEP) * Math.max(2 / cu, 2 / cv)) + 16;
  let r: Refined | null = null;
  for (let it = 0; it < maxSteps && !r; it++) {
    const gu = ev.lockU ? 0 : d.pu * cu, gv = ev.lockV ? 0 : d.pv * cv;
    const g = Math.hypot(gu, gv);
    // flat (or a value that underflowed to 0): the climb cannot tell; keep the grid's peak
    if (!(g > 0) || !(d.p > 0)) return grid;
    const su = CLIMB_STEP * (gu / g) * cu, sv = CLIMB_STEP * (gv / g) * cv;
    const nu = du + su, nv = dv + sv;
    // the horizon ahead: refine (it keeps the point in visible space) from here
    if (!inDisc(nu, nv)) { r = refine(ev, du, dv, cu, cv, disc, d); break; }
    const nd = { ...ev.derivs(nu, nv) };
    if (work) work.evaluations++;
    let stop = !(nd.p > d.p) || !(nd.pu * su + nd.pv * sv > 0);
    if (!stop && dipBetween(d, nd, su, sv)) {
      // the cubic through both ends' log-values and log-slopes dips: look inside the step
      for (let k = 1; k < SUBSTEPS && !stop; k++) {
        const t = k / SUBSTEPS;
        const md = ev.derivs(du + t * su, dv + t * sv);
        if (work) work.evaluations++;
        if (!(md.p > d.p) || !(md.pu * su + md.pv * sv > 0)) {
          // a maximum lies before this point: refine from the last point still rising
          const t0 = (k - 1) / SUBSTEPS;
          r = k === 1 ? refine(ev, du, dv, cu, cv, disc, d) : refine(ev, du + t0 * su, dv + t0 * sv, cu, cv, disc);
          stop = true;
        }
      }
      if (stop) break;
    }
    if (stop) {
      // a maximum lies within this step: refine from the higher end
      r = nd.p > d.p ? refine(ev, nu, nv, cu, cv, disc, nd) : refine(ev, du, dv, cu, cv, disc, d);
      break;
    }
    du = nu; dv = nv;
    d = nd;
  }
  if (!r) return grid;
  return Math.hypot((r.du - grid.du) / cu, (r.dv - grid.dv) / cv) < 1e-3 ? grid : r;
}

/** Vertex of the parabola through (−1, l), (0, c), (1, r), clamped to ±½; 0 when it is not a maximum. */
function parabolaOffset(l: number, c: number, r: number): number {
  const den = l - 2 * c + r;
  const o = den < 0 ? (0.5 * (l - r)) / den : 0;
  return Number.isFinite(o) ? Math.max(-0.5, Math.min(0.5, o)) : 0;
}

/** Sub-cell offset of a grid maximum from a parabola through log|AF|² of its neighbours (±½ cell). */
export function parabolic(p: Float64Array, wm: number, wn: number, a: number, b: number, out: Float64Array | [number, number] = [0, 0]): [number, number] {
  const at = (x: number, y: number) => (x < 0 || y < 0 || x >= wm || y >= wn ? NaN : Math.log(p[y * wm + x]! + 1e-300));
  const c = at(a, b);
  out[0] = parabolaOffset(at(a - 1, b), c, at(a + 1, b));
  out[1] = parabolaOffset(at(a, b - 1), c, at(a, b + 1));
  return out as [number, number];
}

/** The point of the horizon radially outward of Δ (locked arrays: along the free coordinate only). */
function ontoDisc(ev: AfEvaluator, disc: { u0: number; v0: number }, du: number, dv: number): [number, number] {
  const { u0, v0 } = disc;
  const ONE = 1 - 1e-15;
  if (ev.lockU || ev.lockV) {
    if (ev.lockU && ev.lockV) return [0, 0];
    if (ev.lockV) {
      const h = Math.sqrt(Math.max(0, ONE - v0 * v0));
      return [Math.max(-h, Math.min(h, u0 + du)) - u0, 0];
    }
    const h = Math.sqrt(Math.max(0, ONE - u0 * u0));
    return [0, Math.max(-h, Math.min(h, v0 + dv)) - v0];
  }
  const u = u0 + du, v = v0 + dv;
  const r = Math.hypot(u, v);
  if (r <= ONE) return [du, dv];
  return [(u / r) * ONE - u0, (v / r) * ONE - v0];
}

/**
 * Maximise |F|² from a grid point by damped Newton steps (at most one cell long).
 * With `disc`, the point is kept in visible space: a maximum past the horizon is
 * replaced by the maximum along the horizon circle near it (golden-section search);
 * for a non-planar array, by the maximum over the directions near it (refineCap), which
 * can lie just inside the horizon. `sidelobe`: only the value will be used, so that
 * search stops at a bracket 1e-4 of its start, as horizonMax's (goldenAlong: ~21
 * evaluations instead of ~57; the value within ~1e-8, relative); a main peak's, whose
 * place is the pointing, runs to 1e-12.
 */
export function refine(ev: AfEvaluator, du0: number, dv0: number, cu: number, cv: number, disc: { u0: number; v0: number } | null, start: PowerDerivs | null = null, sidelobe = false): Refined {
  let du = du0, dv = dv0;
  // the derivatives at (du, dv) in locals, and the disc test written out: no object, array
  // or closure a call (refine runs several times a beam; ~2 KB of garbage a beam before)
  const du0d = disc ? disc.u0 : 0, dv0d = disc ? disc.v0 : 0;
  let hitEdge = false;
  if (disc && !((du0d + du) ** 2 + (dv0d + dv) ** 2 <= 1)) {
    // start on the horizon (locked arrays: on the line through the commanded point)
    hitEdge = true;
    const o = ontoDisc(ev, disc, du, dv);
    du = o[0];
    dv = o[1];
  }
  // `start`: the caller's ev.derivs(du0, dv0), used when the start was not moved
  const d0 = start && !hitEdge ? start : ev.derivs(du, dv);
  let p = d0.p, pu = d0.pu, pv = d0.pv, puu = d0.puu, pvv = d0.pvv, puv = d0.puv;
  const lock = ev.lockU || ev.lockV;
  for (let it = 0; it < 40; it++) {
    const det = puu * pvv - puv * puv;
    let su: number, sv: number;
    if (lock) {
      // a line array: its pattern is constant across the line's normal plane, so the
      // peak stays at the commanded value of that coordinate and Newton runs in 1-D
      const g = ev.lockV ? pu : pv, hh = ev.lockV ? puu : pvv, c = ev.lockV ? cu : cv;
      let s1 = hh < 0 ? -g / hh : Math.sign(g) * c * 0.25;
      if (!Number.isFinite(s1)) s1 = 0;
      su = ev.lockV ? s1 : 0;
      sv = ev.lockV ? 0 : s1;
      if (ev.lockU && ev.lockV) su = sv = 0;
    } else if (puu < 0 && det > 0) {
      su = -(pvv * pu - puv * pv) / det;
      sv = -(-puv * pu + puu * pv) / det;
    } else {
      const g = Math.hypot(pu / cu, pv / cv) || 1;
      su = ((pu / cu) / g) * cu * 0.25;
      sv = ((pv / cv) / g) * cv * 0.25;
    }
    const len = Math.hypot(su / cu, sv / cv);
    if (len > 1) { su /= len; sv /= len; }
    // converged: a step under 1e-7 cell moves the point by < 1e-9 in u (≈ 1e-7°)
    if (Math.hypot(su / cu, sv / cv) < 1e-7) break;
    let accepted = false;
    for (let h = 0; h < 12; h++) {
      const nu = du + su, nv = dv + sv;
      if (disc && !((du0d + nu) ** 2 + (dv0d + nv) ** 2 <= 1)) { hitEdge = true; su /= 2; sv /= 2; continue; }
      if (Math.hypot(su / cu, sv / cv) < 1e-7) break;
      const nd = ev.derivs(nu, nv);
      if (nd.p >= p) {
        du = nu; dv = nv;
        p = nd.p; pu = nd.pu; pv = nd.pv; puu = nd.puu; pvv = nd.pvv; puv = nd.puv;
        accepted = true;
        break;
      }
      su /= 2;
      sv /= 2;
    }
    if (!accepted) break;
  }
  if (disc && hitEdge && (ev.lockU || ev.lockV)) {
    // a line array keeps the commanded value across its normal plane: the end of the line
    const [eu, ev2] = ontoDisc(ev, disc, du + (ev.lockU ? 0 : Math.sign(pu) * 4 * cu), dv + (ev.lockV ? 0 : Math.sign(pv) * 4 * cv));
    const pe = ev.power(eu, ev2);
    if (pe > p) return { du: eu, dv: ev2, p: pe };
  } else if (disc && hitEdge) {
    // maximise along the horizon near the current point
    const { u0, v0 } = disc;
    const a0 = Math.atan2(v0 + dv, u0 + du);
    const span = 3 * Math.max(cu, cv);
    const at = (a: number) => ev.power(Math.cos(a) - u0, Math.sin(a) - v0);
    let lo = a0 - span, hi = a0 + span;
    const g = (Math.sqrt(5) - 1) / 2;
    let x1 = hi - g * (hi - lo), x2 = lo + g * (hi - lo);
    let f1 = at(x1), f2 = at(x2);
    const tol = sidelobe ? 1e-4 * (hi - lo) : 1e-12;
    for (let it = 0; it < 60 && hi - lo > tol; it++) {
      if (f1 < f2) { lo = x1; x1 = x2; f1 = f2; x2 = lo + g * (hi - lo); f2 = at(x2); }
      else { hi = x2; x2 = x1; f2 = f1; x1 = hi - g * (hi - lo); f1 = at(x1); }
    }
    const a = (lo + hi) / 2;
    const pe = at(a);
    if (!ev.planar) {
      // z ≠ 0: the maximum can lie between the horizon and where Newton stopped, in the layer
      // where the z term's w = √(1 − u² − v²) turns fast: climbed in (α, ε) from the better
      // of the two (refineCap). A rise within the sum's rounding (2n ulps of (Σ|w|)²) is no
      // evidence of a higher point: the earlier answer stays (a change of ~1e-6° otherwise)
      const r = Math.hypot(u0 + du, v0 + dv);
      const c = pe > p ? refineCap(ev, u0, v0, a, 0, pe, cu, cv) : refineCap(ev, u0, v0, Math.atan2(v0 + dv, u0 + du), Math.atan2(Math.sqrt(Math.max(0, 1 - r * r)), r), p, cu, cv);
      let sw = 0;
      for (let i = 0; i < ev.n; i++) sw += Math.hypot(ev.wr[i]!, ev.wi[i]!);
      if (c.p - Math.max(p, pe) > 2 * ev.n * Number.EPSILON * sw * sw) return c;
    }
    if (pe > p) return { du: Math.cos(a) - u0, dv: Math.sin(a) - v0, p: pe };
  }
  return { du, dv, p };
}

/**
 * Non-planar arrays (z ≠ 0) at the horizon: the local maximum of |F|² over the directions
 * near (α, ε) (azimuth around the u-v origin and elevation above the horizon: u = cos ε·cos α,
 * v = cos ε·sin α, w = sin ε), ε ≥ 0, by Newton steps in (α, ε) from value p there. In u-v
 * the z term k·z·w has an infinite slope at the horizon (dw/dr = −r/w), so Newton in u-v
 * cannot converge within that layer and the search along the circle stays at w = 0; in
 * (α, ε) the pattern is smooth and the horizon is the edge ε = 0. A beam at θ = 89.85° on
 * a 3 × 3 list with z = ±0.019 λ peaks at 1 − r = 1.8e-5 inside the horizon: the peak
 * along the circle was 0.01° off (1.1215° printed, brute force 1.1316°). Derivatives by
 * differences 1e-4 cell wide (one-sided in ε at the edge); steps at most a cell, halved
 * until the value rises; returns the start when nothing higher is found.
 */
function refineCap(ev: AfEvaluator, u0: number, v0: number, a0: number, e0: number, p0: number, cu: number, cv: number): Refined {
  const cell = Math.min(cu, cv);
  const h = 1e-4 * cell;
  const at = (a: number, e: number) => {
    const c = Math.cos(e);
    return ev.power(c * Math.cos(a) - u0, c * Math.sin(a) - v0);
  };
  let a = a0, e = Math.max(0, e0), p = p0;
  for (let it = 0; it < 60; it++) {
    const pa1 = at(a + h, e), pa0 = at(a - h, e);
    const Pa = (pa1 - pa0) / (2 * h), Paa = (pa1 - 2 * p + pa0) / (h * h);
    let Pe: number, Pee: number, Pae: number;
    if (e >= h) {
      const pe1 = at(a, e + h), pe0 = at(a, e - h);
      Pe = (pe1 - pe0) / (2 * h);
      Pee = (pe1 - 2 * p + pe0) / (h * h);
      Pae = (at(a + h, e + h) - at(a - h, e + h) - at(a + h, e - h) + at(a - h, e - h)) / (4 * h * h);
    } else {
      // the stencil stays above the horizon (below it the evaluator's w is |sin ε| again)
      const q1 = at(a, e + h), q2 = at(a, e + 2 * h);
      Pe = (-3 * p + 4 * q1 - q2) / (2 * h);
      Pee = (p - 2 * q1 + q2) / (h * h);
      Pae = (at(a + h, e + h) - at(a - h, e + h) - pa1 + pa0) / (2 * h * h);
    }
    let sa: number, se: number;
    const det = Paa * Pee - Pae * Pae;
    if (e === 0 && !(Pe > 0)) {
      // on the horizon, the pattern falling upward: along it only
      sa = Paa < 0 ? -Pa / Paa : Math.sign(Pa) * 0.25 * cell;
      se = 0;
    } else if (Paa < 0 && det > 0) {
      sa = -(Pee * Pa - Pae * Pe) / det;
      se = -(-Pae * Pa + Paa * Pe) / det;
    } else {
      const g = Math.hypot(Pa, Pe) || 1;
      sa = (Pa / g) * 0.25 * cell;
      se = (Pe / g) * 0.25 * cell;
    }
    if (!Number.isFinite(sa) || !Number.isFinite(se)) break;
    const len = Math.hypot(sa, se) / cell;
    if (len > 1) { sa /= len; se /= len; }
    if (Math.hypot(sa, se) < 1e-7 * cell) break;
    let accepted = false;
    for (let k = 0; k < 12; k++) {
      let na = a + sa, ne = e + se;
      // a step past the horizon stops on it
      if (ne < 0) { const t = e / (e - ne); na = a + t * sa; ne = 0; }
      const np = at(na, ne);
      if (np > p) { a = na; e = ne; p = np; accepted = true; break; }
      sa /= 2;
      se /= 2;
    }
    if (!accepted) break;
  }
  const c = Math.cos(e);
  return { du: c * Math.cos(a) - u0, dv: c * Math.sin(a) - v0, p };
}
