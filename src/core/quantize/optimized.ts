/**
 * `optimized`: the codes of a beam chosen together to lower its peak sidelobe level
 * (interface contract, "Quantizer `optimized`").
 *
 * Per beam:
 *  1. start from the `nearest` codes (or the nearest measured states) and analyse them
 *     exactly (BeamAnalyzer, the same analysis as beams.csv): PSL, gain loss, pointing;
 *     the limits follow: gain loss ≤ maxGainLossDb (default nearest's + 0.1 dB),
 *     pointing error ≤ nearest's + 0.01°;
 *  2. rounds: sample the current pattern on the analysis grid (PatternGrid), take the
 *     main lobe by the monotone flood (floodMainLobe) and the strongest local maxima
 *     outside it as sidelobe sample points (kept from round to round, so a lobe pushed
 *     down once stays watched); then coordinate descent over the enabled elements in a
 *     seeded order, trying phase code ±1 and attenuation code ±1, each move accepted
 *     only if it lowers max_s |AF(s)|² / |AF(d̂)|² over the sample points while the gain
 *     at the commanded direction stays within the limit. The array factor at every
 *     sample point is updated incrementally: one element's change touches each sample
 *     point once (a complex multiply-add with a phasor table built per beam);
 *     With an element pattern the sample points are the maxima of |AF|²·E and each is
 *     weighed by E(s)/E(d̂) (its phasor column scaled by the square root), so the
 *     objective is the total pattern's, as the analysis judges PSL;
 *  3. every round ends with the exact analysis; the beam returns the codes with the
 *     lowest exactly analysed PSL that hold both limits — the nearest codes when no
 *     round beat them, so a beam is never worse than nearest.
 *
 * Everything depends only on (plan, frequency, beam, seed) and runs in a fixed order,
 * so tables, analysis workers and `verify` all get the same codes whatever `--jobs`.
 */
import { BeamAnalyzer, M, METRICS } from "../pattern/analyze.js";
import { floodMainLobe, hillClimb, parabolic } from "../pattern/lobes.js";
import { allocWindow, type PowerWindow } from "../pattern/grid.js";
import type { Plan } from "../plan.js";
import { SPEED_OF_LIGHT } from "../units.js";
import { angleBetweenDeg } from "../geometry.js";
import { allocBeamCodes, type BeamCodes, type Quantizer } from "./contract.js";
import { nearestQuantizer } from "./nearest.js";
import { prepareFrequency, type FrequencyPrep } from "./prepare.js";
import { mixSeed, mulberry32 } from "./randomized.js";
import { elementStates, measuredStatesQuantizer, type ElementStates } from "./states.js";

const DEG = Math.PI / 180;
/** Default gain-loss allowance over the nearest codes' own loss (dB), and the pointing allowance (deg). */
export const DEFAULT_EXTRA_LOSS_DB = 0.1;
export const POINTING_ALLOWANCE_DEG = 0.01;
/** Sample points: new sidelobe maxima taken per round, and the most kept per beam. */
const NEW_PER_ROUND = 24;
const MAX_POINTS = 256;
/** Only maxima within this factor of the strongest sidelobe are sampled (−13 dB). */
const SAMPLE_WITHIN = 0.1;
const MAX_ROUNDS = 5;
const MAX_PASSES = 4;
/** A round that gains less than this (dB) on the exact PSL counts as stale; two stale rounds end the beam. */
const ROUND_GAIN_DB = 0.1;
/** A move must lower the sampled objective by this relative amount (no float-noise cycling). */
const MIN_GAIN = 1e-9;

/** What the optimisation of one beam achieved, on the exact analysis. */
export interface OptimizeReport {
  pslBeforeDb: number;
  pslAfterDb: number;
  gainLossBeforeDb: number;
  gainLossAfterDb: number;
  pointingBeforeDeg: number;
  pointingAfterDeg: number;
  /** gain-loss limit applied to this beam (dB) */
  gainLimitDb: number;
  /** enabled elements whose codes differ from nearest */
  changed: number;
}

/** Per-beam record layout (TableRun.optimized, manifest, beams.csv). */
export const OPT_RECORD = ["pslBeforeDb", "pslAfterDb", "gainLossBeforeDb", "gainLossAfterDb", "pointingBeforeDeg", "pointingAfterDeg", "gainLimitDb", "changed"] as const;
export const OPT_FIELDS = OPT_RECORD.length;
export const OPT = Object.fromEntries(OPT_RECORD.map((k, i) => [k, i])) as Record<(typeof OPT_RECORD)[number], number>;

export function writeReport(r: OptimizeReport, out: Float64Array, off: number): void {
  for (let k = 0; k < OPT_FIELDS; k++) out[off + k] = r[OPT_RECORD[k]!];
}

export function emptyReport(): OptimizeReport {
  return { pslBeforeDb: NaN, pslAfterDb: NaN, gainLossBeforeDb: NaN, gainLossAfterDb: NaN, pointingBeforeDeg: NaN, pointingAfterDeg: NaN, gainLimitDb: NaN, changed: 0 };
}

export class OptimizedQuantizer implements Quantizer {
  readonly method = "optimized";
  /** The report of the last beam (filled by beam()). */
  readonly report: OptimizeReport = emptyReport();
  private readonly base: Quantizer;
  private readonly analyzer: BeamAnalyzer;
  private readonly n: number;
  private readonly enabledList: Int32Array;
  private readonly states: ElementStates[] | null;
  private readonly np: number;
  private readonly nq: number;
  /** 10^(g_n/20) */
  private readonly gLin: Float64Array;
  /** ideal attenuator: 10^(−q·step/20) */
  private readonly qLin: Float64Array;
  private readonly k: number;
  private readonly kx: Float64Array;
  private readonly ky: Float64Array;
  private readonly kz: Float64Array;
  private readonly planar: boolean;
  private readonly lockU: boolean;
  private readonly lockV: boolean;
  private readonly idealGain: number;
  // per-beam working state (reused)
  private readonly cur: BeamCodes;
  private readonly best: BeamCodes;
  private readonly wr: Float64Array;
  private readonly wi: Float64Array;
  private readonly t: Float64Array;
  private readonly su = new Float64Array(MAX_POINTS);
  private readonly sv = new Float64Array(MAX_POINTS);
  private readonly key = new Float64Array(MAX_POINTS);
  private npts = 0;
  private readonly er: Float64Array;
  private readonly ei: Float64Array;
  private readonly ar = new Float64Array(MAX_POINTS);
  private readonly ai = new Float64Array(MAX_POINTS);
  private readonly win: PowerWindow;
  private readonly mask: Uint8Array;
  private readonly order: Int32Array;
  private readonly metrics = new Float64Array(METRICS);
  /** per element: ∂(phase)/∂u and ∂(phase)/∂v at the commanded direction (rad per unit u, v) */
  private readonly cu: Float64Array;
  private readonly cv: Float64Array;
  private readonly dsum = new Float64Array(12);
  private readonly dtrial = new Float64Array(12);

  constructor(
    private readonly plan: Plan,
    private readonly fi: number,
    prep: FrequencyPrep = prepareFrequency(plan, fi),
    commanded = true,
  ) {
    const nearestPlan: Plan = { ...plan, quantizer: { method: "nearest", seed: plan.quantizer.seed } };
    this.base = plan.phaseStates || plan.attenStates ? measuredStatesQuantizer(nearestPlan, fi, prep) : nearestQuantizer(nearestPlan, fi, prep, commanded);
    this.analyzer = new BeamAnalyzer(plan, fi);
    const el = plan.elements;
    const n = (this.n = el.count);
    const en: number[] = [];
    for (let i = 0; i < n; i++) if (el.enabled[i]) en.push(i);
    this.enabledList = Int32Array.from(en);
    this.states = plan.phaseStates || plan.attenStates ? Array.from({ length: n }, (_, e) => elementStates(plan, e)) : null;
    this.np = 2 ** plan.phaseBits;
    this.nq = 2 ** plan.attenBits;
    this.gLin = Float64Array.from(plan.cals[fi]!.gainDb, (g) => Math.pow(10, g / 20));
    this.qLin = Float64Array.from({ length: this.nq }, (_, q) => Math.pow(10, (-q * plan.attenStepDb) / 20));
    this.k = (2 * Math.PI * plan.frequenciesHz[fi]!) / SPEED_OF_LIGHT;
    this.kx = Float64Array.from(el.x, (x) => this.k * x);
    this.ky = Float64Array.from(el.y, (y) => this.k * y);
    this.kz = Float64Array.from(el.z, (z) => this.k * z);
    this.planar = el.z.every((z) => z === 0);
    this.lockU = this.planar && el.x.every((x) => x === el.x[0]);
    this.lockV = this.planar && el.y.every((y) => y === el.y[0]);
    const scale = Math.pow(10, prep.gRefDb / 20);
    let s = 0;
    for (const i of en) s += scale * plan.amplitude[i]!;
    this.idealGain = s * s;
    this.cur = allocBeamCodes(n);
    this.best = allocBeamCodes(n);
    this.wr = new Float64Array(n);
    this.wi = new Float64Array(n);
    this.t = new Float64Array(n);
    this.er = new Float64Array(n * MAX_POINTS);
    this.ei = new Float64Array(n * MAX_POINTS);
    const cap = this.analyzer.grid.cap;
    this.win = allocWindow(cap);
    this.mask = new Uint8Array(cap);
    this.order = new Int32Array(en.length);
    this.cu = new Float64Array(n);
    this.cv = new Float64Array(n);
  }

  /** De-steered realized weight of element i with codes (p, q): amplitude and angle relative to the ideal steering. */
  private weight(i: number, p: number, q: number): [number, number] {
    const lsb = 360 / this.np;
    let amp: number, ang: number;
    if (this.states) {
      const s = this.states[i]!;
      amp = this.gLin[i]! * s.pMag[p]! * s.qMag[q]!;
      ang = s.pAng[p]! + s.qAng[q]! - this.t[i]! * lsb * DEG;
    } else {
      amp = this.gLin[i]! * this.qLin[q]!;
      ang = (p - this.t[i]!) * lsb * DEG;
    }
    return [amp * Math.cos(ang), amp * Math.sin(ang)];
  }

  /** Exact analysis of `codes`: [psl dB, gain loss dB, pointing deg]. */
  private exact(b: number, codes: BeamCodes): [number, number, number] {
    this.analyzer.analyse(b, codes, this.metrics, 0, { ideal: false });
    return [this.metrics[M.psl_db]!, this.metrics[M.gain_loss_db]!, this.metrics[M.pointing_error_deg]!];
  }

  beam(b: number, out: BeamCodes): void {
    const plan = this.plan;
    const rep = this.report;
    this.base.beam(b, out);
    const [psl0, gl0, pt0] = this.exact(b, out);
    const limitDb = plan.quantizer.maxGainLossDb ?? gl0 + DEFAULT_EXTRA_LOSS_DB;
    const limitPt = pt0 + POINTING_ALLOWANCE_DEG;
    Object.assign(rep, { pslBeforeDb: psl0, pslAfterDb: psl0, gainLossBeforeDb: gl0, gainLossAfterDb: gl0, pointingBeforeDeg: pt0, pointingAfterDeg: pt0, gainLimitDb: limitDb, changed: 0 });
    // nothing to lower (no sidelobe in visible space), or nearest already breaks the gain limit
    if (!Number.isFinite(psl0) || !(gl0 <= limitDb) || this.enabledList.length < 2) return;

    const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!, w0 = plan.beams.w[b]!;
    this.u0 = u0;
    this.v0 = v0;
    this.w0 = w0;
    const { X, Y, Z, C } = this.analyzer.prep;
    const n = this.n;
    for (let i = 0; i < n; i++) {
      this.t[i] = X[i]! * u0 + Y[i]! * v0 + Z[i]! * w0 + C[i]!;
      // phase k(x·Δu + y·Δv + z·(w − w0)), w = √(1 − u² − v²): its slope at Δ = 0
      this.cu[i] = this.kx[i]! - (w0 > 0 ? (this.kz[i]! * u0) / w0 : 0);
      this.cv[i] = this.ky[i]! - (w0 > 0 ? (this.kz[i]! * v0) / w0 : 0);
    }
    const cur = this.cur;
    copyCodes(out, cur);
    copyCodes(out, this.best);
    for (const i of this.enabledList) [this.wr[i], this.wi[i]] = this.weight(i, cur.phaseCode[i]!, cur.attenCode[i]!);
    // seeded visiting order (Fisher–Yates)
    const rnd = mulberry32(mixSeed(plan.quantizer.seed, this.fi, b));
    const order = this.order;
    order.set(this.enabledList);
    for (let k = order.length - 1; k > 0; k--) {
      const j = Math.floor(rnd() * (k + 1));
      const tmp = order[k]!;
      order[k] = order[j]!;
      order[j] = tmp;
    }
    this.npts = 0;
    this.addPoint(0, 0, Number.NaN); // point 0: the commanded direction
    const minGain = this.idealGain * Math.pow(10, -limitDb / 10);
    let bestPsl = psl0, bestGl = gl0, bestPt = pt0;
    // the pointing predictor's own value for the nearest codes anchors its limit
    const ds = this.dsum.fill(0);
    for (const i of this.enabledList) OptimizedQuantizer.addDerivs(ds, this.wr[i]!, this.wi[i]!, this.cu[i]!, this.cv[i]!);
    const pred0 = this.predictPointing(ds);
    let allowance = POINTING_ALLOWANCE_DEG * 0.8;
    let stale = 0;
    for (let round = 0; round < MAX_ROUNDS && stale < 2; round++) {
      // the exact analysis's highest sidelobe (it can lie where no grid maximum is: between
      // cells and the horizon, or along it), then new sidelobe maxima of the current
      // pattern; none new (after the first round): done
      const lobeAdded = this.addExactLobe();
      if (this.samplePoints() === 0 && !lobeAdded) break;
      this.descend(minGain, Math.max(pred0, pt0) + allowance);
      const [psl, gl, pt] = this.exact(b, cur);
      if (gl <= limitDb && pt <= limitPt) {
        if (psl < bestPsl - 1e-9) {
          if (psl > bestPsl - ROUND_GAIN_DB) stale++;
          else stale = 0;
          bestPsl = psl;
          bestGl = gl;
          bestPt = pt;
          copyCodes(cur, this.best);
        } else stale++;
      } else {
        // the predictor let a limit slip: back to the best codes with a tighter allowance
        copyCodes(this.best, cur);
        for (const i of this.enabledList) [this.wr[i], this.wi[i]] = this.weight(i, cur.phaseCode[i]!, cur.attenCode[i]!);
        allowance /= 2;
        stale++;
      }
    }
    copyCodes(this.best, out);
    let changed = 0;
    this.base.beam(b, cur);
    for (const i of this.enabledList) if (cur.phaseCode[i] !== out.phaseCode[i] || cur.attenCode[i] !== out.attenCode[i]) changed++;
    Object.assign(rep, { pslAfterDb: bestPsl, gainLossAfterDb: bestGl, pointingAfterDeg: bestPt, changed });
  }

  /**
   * The sidelobe the last exact analysis found (BeamAnalyzer.lastSidelobe) as a sample
   * point, unless a point already lies within a quarter cell of it. Returns whether one was added.
   */
  private addExactLobe(): boolean {
    const [du, dv] = this.analyzer.lastSidelobe;
    if (!Number.isFinite(du) || !Number.isFinite(dv) || this.npts >= MAX_POINTS) return false;
    const g = this.analyzer.grid;
    for (let s = 1; s < this.npts; s++) if (Math.hypot((this.su[s]! - du!) / g.du, (this.sv[s]! - dv!) / g.dv) < 0.25) return false;
    // grid points are keyed by their cell (m·1e6 + n); an exact point by NaN, equal to no key
    this.addPoint(du!, dv!, Number.NaN);
    return true;
  }

  /** Add sample point (Δu, Δv) and its phasor column. */
  private addPoint(du: number, dv: number, key: number): void {
    const s = this.npts++;
    this.su[s] = du;
    this.sv[s] = dv;
    this.key[s] = key;
    let dz = 0;
    if (!this.planar) {
      const u = this.u0 + du, v = this.v0 + dv;
      dz = Math.sqrt(Math.max(0, 1 - u * u - v * v)) - this.w0;
    }
    const { kx, ky, kz, er, ei } = this;
    // the total pattern: |√(E(s)/E(d̂))·AF(s)|² (point 0, d̂ itself, keeps 1)
    let w = 1;
    const e = this.analyzer.analysisElement;
    if (e && s > 0) {
      const e0 = e.power(this.u0, this.v0);
      if (e0 > 1e-200) w = Math.sqrt(e.power(this.u0 + du, this.v0 + dv) / e0);
    }
    for (const i of this.enabledList) {
      const a = kx[i]! * du + ky[i]! * dv + kz[i]! * dz;
      er[i * MAX_POINTS + s] = w * Math.cos(a);
      ei[i * MAX_POINTS + s] = w * Math.sin(a);
    }
  }
  private u0 = 0;
  private v0 = 0;
  private w0 = 1;

  /**
   * Sample the current pattern on the analysis grid and add the strongest sidelobe
   * maxima (outside the main lobe's monotone flood, in visible space) as sample points.
   * Returns the number of points added.
   */
  private samplePoints(): number {
    const { u0, v0, w0 } = this;
    const g = this.analyzer.grid;
    const win = this.win;
    g.fill(this.wr, this.wi, u0, v0, w0, win);
    // with an element pattern: the maxima of the total pattern, as the analysis sees it
    this.analyzer.weigh(win, u0, v0);
    const { wm, wn, p, visible } = win;
    const top = hillClimb(p, wm, wn, -win.m0, -win.n0);
    floodMainLobe(p, wm, wn, top, this.mask);
    const mask = this.mask;
    const cand: number[] = [];
    let mx = 0;
    const b0 = this.lockV ? -win.n0 : 0, b1 = this.lockV ? -win.n0 + 1 : wn;
    const a0 = this.lockU ? -win.m0 : 0, a1 = this.lockU ? -win.m0 + 1 : wm;
    for (let bb = b0; bb < b1; bb++)
      for (let a = a0; a < a1; a++) {
        const q = bb * wm + a;
        if (!visible[q] || mask[q]) continue;
        const pq = p[q]!;
        let isMax = true;
        for (let dj = -1; dj <= 1 && isMax; dj++)
          for (let di = -1; di <= 1; di++) {
            if (!di && !dj) continue;
            const x = a + di, y = bb + dj;
            if (x < 0 || y < 0 || x >= wm || y >= wn) continue;
            const r = y * wm + x;
            if (visible[r] && !mask[r] && p[r]! > pq) { isMax = false; break; }
          }
        if (!isMax) continue;
        cand.push(q);
        if (pq > mx) mx = pq;
      }
    cand.sort((x, y) => p[y]! - p[x]! || x - y);
    let added = 0;
    for (const q of cand) {
      if (added >= NEW_PER_ROUND || this.npts >= MAX_POINTS || p[q]! < SAMPLE_WITHIN * mx) break;
      const a = q % wm, bb = (q - a) / wm;
      const key = (win.m0 + a) * 1e6 + (win.n0 + bb);
      let seen = false;
      for (let s = 1; s < this.npts; s++) if (this.key[s] === key) { seen = true; break; }
      if (seen) continue;
      const [oa, ob] = parabolic(p, wm, wn, a, bb);
      let du = (win.m0 + a + oa) * g.du, dv = (win.n0 + bb + ob) * g.dv;
      if ((u0 + du) ** 2 + (v0 + dv) ** 2 > 1) { du = (win.m0 + a) * g.du; dv = (win.n0 + bb) * g.dv; }
      this.addPoint(du, dv, key);
      added++;
    }
    return added;
  }

  /**
   * Predicted pointing error (deg) from the sums A, ∂A/∂u, ∂A/∂v, ∂²A/∂u², ∂²A/∂v², ∂²A/∂u∂v
   * at the commanded direction: one Newton step on |A|² from Δ = 0 (a line array moves
   * along its line only, as in the analysis).
   */
  private predictPointing(s: Float64Array): number {
    const [a, ai, au, aui, av, avi, auu, auui, avv, avvi, auv, auvi] = [s[0]!, s[1]!, s[2]!, s[3]!, s[4]!, s[5]!, s[6]!, s[7]!, s[8]!, s[9]!, s[10]!, s[11]!];
    const pu = 2 * (a * au + ai * aui), pv = 2 * (a * av + ai * avi);
    const puu = 2 * (au * au + aui * aui) + 2 * (a * auu + ai * auui);
    const pvv = 2 * (av * av + avi * avi) + 2 * (a * avv + ai * avvi);
    const puv = 2 * (au * av + aui * avi) + 2 * (a * auv + ai * auvi);
    let du = 0, dv = 0;
    if (this.lockU && this.lockV) return 0;
    if (this.lockV) du = puu < 0 ? -pu / puu : 0;
    else if (this.lockU) dv = pvv < 0 ? -pv / pvv : 0;
    else {
      const det = puu * pvv - puv * puv;
      if (!(puu < 0 && det > 0)) return Infinity;
      du = -(pvv * pu - puv * pv) / det;
      dv = -(-puv * pu + puu * pv) / det;
    }
    const u = this.u0 + du, v = this.v0 + dv;
    const w = Math.sqrt(Math.max(0, 1 - u * u - v * v));
    return angleBetweenDeg({ u: this.u0, v: this.v0, w: this.w0 }, { u, v, w });
  }

  /** Add Δw·(1, j·cu, j·cv, −cu², −cv², −cu·cv) to the derivative sums. */
  private static addDerivs(s: Float64Array, dr: number, di: number, cu: number, cv: number): void {
    s[0] = s[0]! + dr;
    s[1] = s[1]! + di;
    s[2] = s[2]! - di * cu;
    s[3] = s[3]! + dr * cu;
    s[4] = s[4]! - di * cv;
    s[5] = s[5]! + dr * cv;
    s[6] = s[6]! - dr * cu * cu;
    s[7] = s[7]! - di * cu * cu;
    s[8] = s[8]! - dr * cv * cv;
    s[9] = s[9]! - di * cv * cv;
    s[10] = s[10]! - dr * cu * cv;
    s[11] = s[11]! - di * cu * cv;
  }

  /**
   * Coordinate descent on the sampled objective from the current codes: each move must
   * lower it, keep the gain at d̂ above `minGain` and the predicted pointing error at or
   * under `maxPoint`.
   */
  private descend(minGain: number, maxPoint: number): void {
    const S = this.npts;
    const { ar, ai, er, ei, wr, wi, cur, order, cu, cv } = this;
    ar.fill(0, 0, S);
    ai.fill(0, 0, S);
    const ds = this.dsum.fill(0);
    for (const i of this.enabledList) {
      const o = i * MAX_POINTS;
      const a = wr[i]!, c = wi[i]!;
      for (let s = 0; s < S; s++) {
        const x = er[o + s]!, y = ei[o + s]!;
        ar[s] = ar[s]! + a * x - c * y;
        ai[s] = ai[s]! + a * y + c * x;
      }
      OptimizedQuantizer.addDerivs(ds, a, c, cu[i]!, cv[i]!);
    }
    const trial = this.dtrial;
    let arg = 1;
    const objective = (): number => {
      let m = 0;
      for (let s = 1; s < S; s++) {
        const p = ar[s]! * ar[s]! + ai[s]! * ai[s]!;
        if (p > m) { m = p; arg = s; }
      }
      return m / (ar[0]! * ar[0]! + ai[0]! * ai[0]!);
    };
    let f = objective();
    const np = this.np, nq = this.nq;
    const nMoves = nq > 1 ? 4 : 2;
    const lsbRad = (2 * Math.PI) / np;
    for (let pass = 0; pass < MAX_PASSES; pass++) {
      let improved = 0;
      for (let k = 0; k < order.length; k++) {
        const i = order[k]!;
        const o = i * MAX_POINTS;
        const p0 = cur.phaseCode[i]!, q0 = cur.attenCode[i]!;
        let bestF = f * (1 - MIN_GAIN);
        let bp = -1, bq = -1, bdr = 0, bdi = 0;
        for (let mv = 0; mv < nMoves; mv++) {
          const dp = mv === 0 ? 1 : mv === 1 ? -1 : 0;
          const q = q0 + (mv === 2 ? 1 : mv === 3 ? -1 : 0);
          if (q < 0 || q >= nq) continue;
          const p = (p0 + dp + np) % np;
          let amp: number, ang: number;
          if (this.states) {
            const st = this.states[i]!;
            amp = this.gLin[i]! * st.pMag[p]! * st.qMag[q]!;
            ang = st.pAng[p]! + st.qAng[q]! - this.t[i]! * lsbRad;
          } else {
            amp = this.gLin[i]! * this.qLin[q]!;
            ang = (p - this.t[i]!) * lsbRad;
          }
          const dr = amp * Math.cos(ang) - wr[i]!, di = amp * Math.sin(ang) - wi[i]!;
          const gr = ar[0]! + dr, gi = ai[0]! + di;
          const g0 = gr * gr + gi * gi;
          if (g0 < minGain) continue;
          const thresh = bestF * g0;
          // the current worst point first: most moves that do not help fail there at once
          {
            const x = er[o + arg]!, y = ei[o + arg]!;
            const r = ar[arg]! + dr * x - di * y, im = ai[arg]! + dr * y + di * x;
            if (r * r + im * im >= thresh) continue;
          }
          let m = 0;
          for (let s = 1; s < S; s++) {
            const x = er[o + s]!, y = ei[o + s]!;
            const r = ar[s]! + dr * x - di * y;
            const im = ai[s]! + dr * y + di * x;
            const pw = r * r + im * im;
            if (pw > m) {
              m = pw;
              if (m >= thresh) break;
            }
          }
          if (!(m < thresh)) continue;
          trial.set(ds);
          OptimizedQuantizer.addDerivs(trial, dr, di, cu[i]!, cv[i]!);
          if (!(this.predictPointing(trial) <= maxPoint)) continue;
          bestF = m / g0;
          bp = p;
          bq = q;
          bdr = dr;
          bdi = di;
        }
        if (bp < 0) continue;
        let m = 0;
        for (let s = 0; s < S; s++) {
          const x = er[o + s]!, y = ei[o + s]!;
          ar[s] = ar[s]! + bdr * x - bdi * y;
          ai[s] = ai[s]! + bdr * y + bdi * x;
          if (s > 0) {
            const pw = ar[s]! * ar[s]! + ai[s]! * ai[s]!;
            if (pw > m) { m = pw; arg = s; }
          }
        }
        OptimizedQuantizer.addDerivs(ds, bdr, bdi, cu[i]!, cv[i]!);
        wr[i] = wr[i]! + bdr;
        wi[i] = wi[i]! + bdi;
        cur.phaseCode[i] = bp;
        cur.attenCode[i] = bq;
        f = bestF;
        improved++;
      }
      if (!improved) break;
      f = objective(); // re-anchor after the pass (no drift in the threshold)
    }
  }
}

function copyCodes(a: BeamCodes, b: BeamCodes): void {
  b.phaseCode.set(a.phaseCode);
  b.attenCode.set(a.attenCode);
  b.phaseDeg.set(a.phaseDeg);
  b.attenDb.set(a.attenDb);
  b.clipped = a.clipped;
}

export function optimizedQuantizer(plan: Plan, fi: number, prep: FrequencyPrep = prepareFrequency(plan, fi), commanded = true): OptimizedQuantizer {
  return new OptimizedQuantizer(plan, fi, prep, commanded);
}

export interface OptimizedSummary {
  beams: number;
  /** beams whose codes differ from nearest (their exact PSL is lower) */
  improved: number;
  /** beams with no sidelobe in visible space or whose nearest codes already break the gain limit */
  untouched: number;
  /** worst (largest) PSL over the grid, dB: nearest codes, optimized codes */
  pslWorstBeforeDb: number | null;
  pslWorstAfterDb: number | null;
  /** PSL lowered by (before − after, dB) over all beams: median and max */
  pslGainMedianDb: number | null;
  pslGainMaxDb: number | null;
  gainLossMedianBeforeDb: number | null;
  gainLossMedianAfterDb: number | null;
  gainLossMaxAfterDb: number | null;
  pointingMaxBeforeDeg: number | null;
  pointingMaxAfterDeg: number | null;
}

/** Grid-wide figures from TableRun.optimized records. */
export function summariseOptimized(rec: Float64Array): OptimizedSummary {
  const n = rec.length / OPT_FIELDS;
  const col = (k: number) => Array.from({ length: n }, (_, i) => rec[i * OPT_FIELDS + k]!).filter((x) => Number.isFinite(x));
  const med = (a: number[]) => {
    if (!a.length) return null;
    const s = [...a].sort((x, y) => x - y);
    const h = (s.length - 1) / 2;
    return s[Math.floor(h)]! + (h - Math.floor(h)) * (s[Math.ceil(h)]! - s[Math.floor(h)]!);
  };
  const max = (a: number[]) => (a.length ? Math.max(...a) : null);
  const gains: number[] = [];
  let improved = 0, untouched = 0;
  for (let i = 0; i < n; i++) {
    const o = i * OPT_FIELDS;
    const before = rec[o + OPT.pslBeforeDb]!, after = rec[o + OPT.pslAfterDb]!;
    if (Number.isFinite(before) && Number.isFinite(after)) gains.push(before - after);
    if (rec[o + OPT.changed]! > 0) improved++;
    if (!Number.isFinite(before) || !(rec[o + OPT.gainLossBeforeDb]! <= rec[o + OPT.gainLimitDb]!)) untouched++;
  }
  return {
    beams: n,
    improved,
    untouched,
    pslWorstBeforeDb: max(col(OPT.pslBeforeDb)),
    pslWorstAfterDb: max(col(OPT.pslAfterDb)),
    pslGainMedianDb: med(gains),
    pslGainMaxDb: max(gains),
    gainLossMedianBeforeDb: med(col(OPT.gainLossBeforeDb)),
    gainLossMedianAfterDb: med(col(OPT.gainLossAfterDb)),
    gainLossMaxAfterDb: max(col(OPT.gainLossAfterDb)),
    pointingMaxBeforeDeg: max(col(OPT.pointingBeforeDeg)),
    pointingMaxAfterDeg: max(col(OPT.pointingAfterDeg)),
  };
}
