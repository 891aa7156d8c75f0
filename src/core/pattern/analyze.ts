/**
 * Per-beam analysis (beams.csv): ideal (tapered, unquantised) and realized (codes
 * through the channel model, calibration included) patterns of every beam, and the
 * metrics the interface contract defines.
 */
import { angleBetweenDeg, uvToW } from "../geometry.js";
import type { Plan } from "../plan.js";
import type { BeamCodes } from "../quantize/contract.js";
import { prepareFrequency, type FrequencyPrep } from "../quantize/prepare.js";
import { elementStates, type ElementStates } from "../quantize/states.js";
import { SPEED_OF_LIGHT } from "../units.js";
import { AfEvaluator } from "./evaluator.js";
import { allocWindow, applyWeight, elementWindow, listCounts, PatternGrid, type PowerWindow } from "./grid.js";
import { LineCutPattern, makeElementPattern, scanLossDb, type ElementPattern } from "../element.js";
import { LobeFinder, peakOnDemand } from "./lobes.js";
import { allocTrace, CircleSeries, exactSamples, traceExact, traceLattice, type HorizonTrace, type LatticeSpectra } from "./horizon.js";
import { IdealLobes } from "./ideal-lobes.js";

export const METRIC_COLUMNS = [
  "peak_u",
  "peak_v",
  "pointing_error_deg",
  "psl_ideal_db",
  "psl_db",
  "sll_rise_db",
  "gain_loss_db",
  "rms_phase_error_deg",
  "rms_amp_error_db",
  "clipped",
  // only in beams.csv when the scenario has an element pattern (NaN otherwise)
  "scan_loss_db",
] as const;
export const METRICS = METRIC_COLUMNS.length;
export const M = Object.fromEntries(METRIC_COLUMNS.map((c, i) => [c, i])) as Record<(typeof METRIC_COLUMNS)[number], number>;

const DEG = Math.PI / 180;

export interface PatternDetail {
  /** Sampled power window of the realized and ideal patterns, and the grid. */
  realized: PowerWindow;
  ideal: PowerWindow;
  du: number;
  dv: number;
  /** Per-element phase error (deg) and amplitude error (dB), NaN for disabled. */
  phaseErrorDeg: Float64Array;
  ampErrorDb: Float64Array;
}

/** Representatives whose ideal PSL a BeamAnalyzer keeps (a 4096-beam grid has ~1000; memory stays bounded for any count). */
const IDEAL_MEMO_MAX = 1 << 16;

/**
 * The amplitudes a_n are symmetric in x: every element has a partner at x' = 2c − x, the
 * same y, with the same amplitude (positions within 1e-9 λ, amplitudes within 1e-12 of
 * the largest: the PSL's change is then below 1e-10 dB). c is the x-midpoint of the
 * elements with a > 0. Then |Σ a_n e^{jk(x_n Δu + y_n Δv)}| is even in Δu.
 */
export function mirrorSymmetric(x: Float64Array, y: Float64Array, a: Float64Array, lambda: number): boolean {
  let lo = Infinity, hi = -Infinity, amax = 0;
  for (let i = 0; i < x.length; i++) {
    if (!(a[i]! > 0)) continue;
    lo = Math.min(lo, x[i]!);
    hi = Math.max(hi, x[i]!);
    amax = Math.max(amax, a[i]!);
  }
  if (!(amax > 0)) return false;
  const tol = 1e-9 * lambda, c2 = lo + hi;
  // snap coordinates to the tolerance's grid; a partner is looked up at its snapped place and the two neighbouring ones
  const at = new Map<string, number>();
  const cell = (v: number) => Math.round(v / tol);
  for (let i = 0; i < x.length; i++) if (a[i]! > 0) at.set(`${cell(x[i]!)} ${cell(y[i]!)}`, i);
  for (let i = 0; i < x.length; i++) {
    if (!(a[i]! > 0)) continue;
    const mx = cell(c2 - x[i]!), my = cell(y[i]!);
    let found = -1;
    for (let dx = -1; dx <= 1 && found < 0; dx++)
      for (let dy = -1; dy <= 1 && found < 0; dy++) {
        const j = at.get(`${mx + dx} ${my + dy}`);
        if (j !== undefined && Math.abs(c2 - x[i]! - x[j]!) <= tol && Math.abs(y[i]! - y[j]!) <= tol) found = j;
      }
    if (found < 0 || Math.abs(a[found]! - a[i]!) > 1e-12 * amax) return false;
  }
  return true;
}

export class BeamAnalyzer {
  readonly prep: FrequencyPrep;
  readonly grid: PatternGrid;
  private readonly evR: AfEvaluator;
  private readonly evI: AfEvaluator;
  private readonly finder: LobeFinder;
  private readonly winR: PowerWindow;
  private readonly winI: PowerWindow;
  private readonly idealAmp: Float64Array;
  private readonly zero: Float64Array;
  private readonly states: ElementStates[] | null;
  /** The ideal de-steered weights do not depend on the beam: on lattices their FFT is taken once. */
  private readonly idealPeriodic: Float64Array | null = null;
  private idealLobes: IdealLobes | null = null;
  /** the ideal amplitudes are symmetric in x (mirrorSymmetric): beams (±u0, ±v0) share their ideal PSL */
  private idealMirror = false;
  /** ideal PSL (dB) by representative beam (idealPsl) */
  private readonly idealMemo = new Map<string, number>();
  /** planar element lists: the ideal |F|² on every window offset, taken at the first idealPsl (false: not planar) */
  private idealTable: Float64Array | false | null = null;
  /** the ideal weights' 1-D transforms (lattices), for the horizon trace */
  private readonly idealSpectra: LatticeSpectra | null = null;
  /** planar element lists (direct mode) where it is cheaper: the horizon trace from the array factor's series in α */
  private readonly series: CircleSeries | null = null;
  private readonly traceR: HorizonTrace = allocTrace();
  private readonly traceI: HorizonTrace = allocTrace();
  readonly phaseErr: Float64Array;
  readonly ampErr: Float64Array;
  /** per element: the attenuation code whose amplitude is in qAmp (ideal parts) */
  private readonly lastQ: Int32Array;
  private readonly qAmp: Float64Array;
  /** Element pattern (null: isotropic) and its weights on the current beam's window frame. */
  readonly element: ElementPattern | null;
  /** line arrays with an element pattern: the pattern the analysis uses (set to each beam) */
  private readonly lineCut: LineCutPattern | null = null;
  private readonly winE: Float64Array | null;
  private winEKey = "";

  constructor(private readonly plan: Plan, readonly fi: number) {
    this.prep = prepareFrequency(plan, fi);
    const el = plan.elements;
    const k = (2 * Math.PI * plan.frequenciesHz[fi]!) / SPEED_OF_LIGHT;
    this.grid = new PatternGrid(plan, fi);
    this.evR = new AfEvaluator(el.x, el.y, el.z, k);
    this.evI = new AfEvaluator(el.x, el.y, el.z, k);
    this.finder = new LobeFinder(this.grid.cap);
    this.winR = allocWindow(this.grid.cap);
    this.winI = allocWindow(this.grid.cap);
    this.element = plan.element ? makeElementPattern(plan.element) : null;
    // a line array: the element pattern on the cut through the commanded direction (LineCutPattern)
    if (this.element && this.evR.lockU !== this.evR.lockV) this.lineCut = new LineCutPattern(this.element, this.evR.lockV);
    this.evR.element = this.lineCut ?? this.element;
    this.evI.element = this.lineCut ?? this.element;
    this.winE = this.element ? new Float64Array(this.grid.cap) : null;
    const n = el.count;
    const scale = Math.pow(10, this.prep.gRefDb / 20);
    this.idealAmp = new Float64Array(n);
    for (let i = 0; i < n; i++) this.idealAmp[i] = el.enabled[i] ? scale * plan.amplitude[i]! : 0;
    this.zero = new Float64Array(n);
    this.evI.wr.set(this.idealAmp);
    this.evI.wi.fill(0);
    this.states = plan.phaseStates || plan.attenStates ? Array.from({ length: n }, (_, e) => elementStates(plan, e)) : null;
    this.phaseErr = new Float64Array(n);
    this.ampErr = new Float64Array(n);
    this.lastQ = new Int32Array(n).fill(-1);
    this.qAmp = new Float64Array(n);
    if (this.grid.mode === "direct" && this.evR.planar && !this.evR.lockU && !this.evR.lockV) {
      const orders = CircleSeries.orderCount(el.x, el.y, k);
      const c = listCounts(el);
      if (CircleSeries.worthIt(n, c.x, c.y, orders, exactSamples(Math.min(this.grid.du, this.grid.dv)))) this.series = new CircleSeries(el.x, el.y, k);
    }
    if (this.grid.mode === "fft") {
      this.idealPeriodic = this.grid.periodicPower(this.idealAmp, this.zero);
      this.idealSpectra = this.grid.spectra(this.idealAmp, this.zero, true);
    }
  }

  /** The horizon trace of the weights last sampled into the grid (lattices) or of `ev` (direct). */
  private traceHorizon(ev: AfEvaluator, spectra: LatticeSpectra | null, u0: number, v0: number, out: HorizonTrace): HorizonTrace {
    if (spectra) {
      traceLattice(spectra, u0, v0, out);
      // the spectra hold |AF|² alone: weigh the horizon samples by the element pattern
      // (traceExact evaluates ev.power, which already includes it)
      const el = this.lineCut ?? this.element;
      out.hasAf = el !== null;
      if (el) {
        if (out.af.length < out.p.length) out.af = new Float64Array(out.p.length);
        for (let k = 0; k < out.n; k++) {
          out.af[k] = out.p[k]!;
          out.p[k] = out.p[k]! * el.power(u0 + out.du[k]!, v0 + out.dv[k]!);
        }
      }
    } else traceExact(ev, u0, v0, Math.min(this.grid.du, this.grid.dv), out, this.series);
    return out;
  }

  /** Realized de-steered weights of a beam from its codes; fills phaseErr/ampErr. */
  private realized(b: number, codes: BeamCodes): void {
    const plan = this.plan;
    const { X, Y, Z, C, lsbDeg } = this.prep;
    const u = plan.beams.u[b]!, v = plan.beams.v[b]!, w = plan.beams.w[b]!;
    const el = plan.elements;
    const wr = this.evR.wr, wi = this.evR.wi;
    for (let i = 0; i < el.count; i++) {
      if (!el.enabled[i]) {
        wr[i] = 0;
        wi[i] = 0;
        this.phaseErr[i] = NaN;
        this.ampErr[i] = NaN;
        this.lastQ[i] = -1;
        continue;
      }
      const t = X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!; // (φ − c)/LSB
      const p = codes.phaseCode[i]!, q = codes.attenCode[i]!;
      let errDeg: number, amp: number;
      if (this.states) {
        const s = this.states[i]!;
        errDeg = (s.pAng[p]! + s.qAng[q]!) / DEG - t * lsbDeg;
        amp = Math.pow(10, plan.cals[this.fi]!.gainDb[i]! / 20) * s.pMag[p]! * s.qMag[q]!;
        this.ampErr[i] = 20 * Math.log10(amp / this.idealAmp[i]!);
      } else {
        errDeg = (p - t) * lsbDeg;
        // ideal parts: the amplitude depends on the attenuation code only
        if (this.lastQ[i] !== q) {
          this.lastQ[i] = q;
          this.qAmp[i] = Math.pow(10, (plan.cals[this.fi]!.gainDb[i]! - q * plan.attenStepDb) / 20);
          this.ampErr[i] = 20 * Math.log10(this.qAmp[i]! / this.idealAmp[i]!);
        }
        amp = this.qAmp[i]!;
      }
      errDeg -= 360 * Math.round(errDeg / 360);
      wr[i] = amp * Math.cos(errDeg * DEG);
      wi[i] = amp * Math.sin(errDeg * DEG);
      this.phaseErr[i] = errDeg;
    }
  }

  /** Where the last analyse() found the realized pattern's highest sidelobe: (Δu, Δv) from the commanded direction (NaN: none). */
  readonly lastSidelobe = new Float64Array([NaN, NaN]);

  /**
   * The element pattern the analysis weighs the last analysed beam's pattern by (a line
   * array's: on the cut through that beam, LineCutPattern); null: isotropic elements.
   */
  get analysisElement(): ElementPattern | null {
    return this.lineCut ?? this.element;
  }

  /** With an element pattern: weight a sampled window by it (the total pattern |AF|²·E). */
  weigh(win: PowerWindow, u0: number, v0: number): void {
    if (!this.element) return;
    const key = `${u0},${v0},${win.m0},${win.n0},${win.wm},${win.wn}`;
    if (key !== this.winEKey) {
      elementWindow(this.lineCut ?? this.element, win, u0, v0, this.grid.du, this.grid.dv, this.winE!);
      this.winEKey = key;
    }
    applyWeight(win, this.winE!);
  }

  /** PSL (dB) of the ideal tapered pattern of beam b; it does not depend on the quantizer or part. */
  idealPsl(b: number): number {
    const plan = this.plan;
    const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!, w0 = plan.beams.w[b]!;
    const g = this.grid;
    this.evI.setBeam(u0, v0, w0);
    this.lineCut?.setBeam(u0, v0);
    // the cached lobe structure assumes a beam-independent pattern: not so with an element pattern
    if (this.idealPeriodic && !this.evI.lockU && !this.evI.lockV && !this.element) {
      if (!this.idealLobes) {
        this.idealLobes = new IdealLobes(this.idealPeriodic, g.fftSize[0], g.fftSize[1], g.du, g.dv, this.evI, this.idealSpectra!);
        this.idealMirror = mirrorSymmetric(plan.elements.x, plan.elements.y, this.idealAmp, SPEED_OF_LIGHT / plan.frequenciesHz[this.fi]!);
      }
      // I(Δ) = |Σ a_n e^{jk r_n·Δ}|² with real a_n is even, I(−Δ) = I(Δ), and beam −d̂'s
      // visible disc is beam d̂'s mirrored through Δ = 0: the two share their ideal PSL (and
      // with a taper symmetric in x, I(−Δu, Δv) = I(Δu, Δv): the four beams (±u0, ±v0)).
      // Each is taken at one representative, so the value is one function of the beam
      // whichever thread meets it first, and kept for the others.
      let cu = u0 + 0, cv = v0 + 0;
      if (this.idealMirror) { cu = Math.abs(cu); cv = Math.abs(cv); }
      else if (cu < 0 || (cu === 0 && cv < 0)) { cu = -cu; cv = -cv; }
      const key = `${cu} ${cv}`;
      let p = this.idealMemo.get(key);
      if (p === undefined) {
        this.evI.setBeam(cu, cv, uvToW(cu, cv));
        p = 10 * Math.log10(this.idealLobes.sidelobePower(cu, cv) / this.idealLobes.peakPower);
        this.evI.setBeam(u0, v0, w0);
        if (this.idealMemo.size < IDEAL_MEMO_MAX) this.idealMemo.set(key, p);
      }
      return p;
    }
    if (this.idealPeriodic) g.fillFromPeriodic(this.idealPeriodic, u0, v0, this.winI);
    else {
      if (this.idealTable === null) this.idealTable = g.offsetTable(this.idealAmp, this.zero) ?? false;
      if (this.idealTable) g.fillFromTable(this.idealTable, u0, v0, this.winI);
      else g.fill(this.idealAmp, this.zero, u0, v0, w0, this.winI);
    }
    this.weigh(this.winI, u0, v0);
    const id = this.finder.analyse(this.winI, this.evI, g.du, g.dv, u0, v0, this.traceHorizon(this.evI, this.idealSpectra, u0, v0, this.traceI));
    return 10 * Math.log10(id.sidelobePower / id.peakPower);
  }

  /**
   * Analyse beam b with its codes; writes METRICS values into out[off …]. With
   * `ideal: false` the ideal pattern is skipped (psl_ideal_db and sll_rise_db are NaN,
   * to be filled from idealPsl by the caller, as the sweep does).
   */
  analyse(b: number, codes: BeamCodes, out: Float64Array, off: number, opts: { ideal?: boolean } = {}): void {
    const plan = this.plan;
    const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!, w0 = plan.beams.w[b]!;
    this.realized(b, codes);
    const g = this.grid;
    this.evR.setBeam(u0, v0, w0);
    this.evI.setBeam(u0, v0, w0);
    this.lineCut?.setBeam(u0, v0);
    g.fill(this.evR.wr, this.evR.wi, u0, v0, w0, this.winR);
    this.weigh(this.winR, u0, v0);
    const spR = g.mode === "fft" ? g.spectra(this.evR.wr, this.evR.wi, false) : null;
    const r = this.finder.analyse(this.winR, this.evR, g.du, g.dv, u0, v0, this.traceHorizon(this.evR, spR, u0, v0, this.traceR));
    this.lastSidelobe[0] = r.sidelobeDu;
    this.lastSidelobe[1] = r.sidelobeDv;
    const pslI = opts.ideal === false ? NaN : this.idealPsl(b);
    const pu = u0 + r.peakDu, pv = v0 + r.peakDv;
    const pointing = angleBetweenDeg({ u: u0, v: v0, w: w0 }, { u: pu, v: pv, w: uvToW(pu, pv) });
    const pslR = 10 * Math.log10(r.sidelobePower / r.peakPower);
    const [fR, fI] = this.gainPowers();
    let sp = 0, sa = 0, n = 0;
    for (let i = 0; i < plan.elements.count; i++) {
      if (!plan.elements.enabled[i]) continue;
      sp += this.phaseErr[i]! ** 2;
      sa += this.ampErr[i]! ** 2;
      n++;
    }
    out[off + M.peak_u] = pu;
    out[off + M.peak_v] = pv;
    out[off + M.pointing_error_deg] = pointing;
    out[off + M.psl_ideal_db] = pslI;
    out[off + M.psl_db] = pslR;
    out[off + M.sll_rise_db] = pslR - pslI;
    out[off + M.gain_loss_db] = -10 * Math.log10(fR / fI);
    out[off + M.rms_phase_error_deg] = Math.sqrt(sp / n);
    out[off + M.rms_amp_error_db] = Math.sqrt(sa / n);
    out[off + M.clipped] = codes.clipped;
    out[off + M.scan_loss_db] = this.element ? scanLossDb(this.element, u0, v0) : NaN;
  }

  /**
   * The main-lobe peak and gain of beam b played with `codes` at this analyzer's
   * frequency (the band analysis: codes of another table frequency played here).
   * Writes peak_u, peak_v, pointing_error_deg, gain_loss_db into out[off …]; the
   * peak (hill-climb on the same grid from Δ = 0, refined on the exact pattern),
   * pointing and gain are found as in analyse(), with the grid cells evaluated on
   * demand instead of by a whole-pattern FFT.
   */
  analysePeak(b: number, codes: BeamCodes, out: Float64Array, off: number): void {
    const plan = this.plan;
    const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!, w0 = plan.beams.w[b]!;
    this.realized(b, codes);
    this.evR.setBeam(u0, v0, w0);
    this.evI.setBeam(u0, v0, w0);
    this.lineCut?.setBeam(u0, v0);
    const r = peakOnDemand(this.evR, this.grid.du, this.grid.dv, u0, v0);
    const pu = u0 + r.du, pv = v0 + r.dv;
    out[off] = pu;
    out[off + 1] = pv;
    out[off + 2] = angleBetweenDeg({ u: u0, v: v0, w: w0 }, { u: pu, v: pv, w: uvToW(pu, pv) });
    const [fR, fI] = this.gainPowers();
    out[off + 3] = -10 * Math.log10(fR / fI);
  }

  /**
   * Realized and ideal power at the commanded direction, whose ratio is the gain loss
   * (the element pattern cancels in it). Where the element's power there is below 1e-200
   * (a steep cosine close to the horizon: cos^100 θ at θ = 89.99° is 1e-376, 0 in
   * doubles) the products lose precision or vanish (0/0), so the array factors alone.
   */
  private gainPowers(): [number, number] {
    const e = this.element;
    if (!e || e.power(this.evR.u0, this.evR.v0) >= 1e-200) return [this.evR.power(0, 0), this.evI.power(0, 0)];
    const r = this.evR.field(0, 0), rp = r[0] * r[0] + r[1] * r[1];
    const i = this.evI.field(0, 0);
    return [rp, i[0] * i[0] + i[1] * i[1]];
  }

  /**
   * Principal-plane cuts through the beam direction of the last analysed beam:
   * |AF|² (dB, relative to the realized peak) of the ideal and realized weights along
   * u (v = v0) and along v (u = u0), over visible space, `n` points each.
   */
  cuts(n: number): { u: { x: number[]; ideal: number[]; realized: number[] }; v: { x: number[]; ideal: number[]; realized: number[] } } {
    const { u0, v0 } = this.evR;
    let peak = 0;
    const mk = (axis: "u" | "v") => {
      const other = axis === "u" ? v0 : u0;
      const half = Math.sqrt(Math.max(0, 1 - other * other));
      const x: number[] = [], ideal: number[] = [], realized: number[] = [];
      for (let i = 0; i < n; i++) {
        const t = -half + (2 * half * i) / (n - 1);
        const du = axis === "u" ? t - u0 : 0;
        const dv = axis === "v" ? t - v0 : 0;
        x.push(t);
        const pr = this.evR.power(du, dv);
        const pi = this.evI.power(du, dv);
        peak = Math.max(peak, pr, pi);
        realized.push(pr);
        ideal.push(pi);
      }
      return { x, ideal, realized };
    };
    const cu = mk("u"), cv = mk("v");
    const db = (a: number[]) => a.map((p) => Math.max(-80, 10 * Math.log10(p / peak + 1e-30)));
    return { u: { x: cu.x, ideal: db(cu.ideal), realized: db(cu.realized) }, v: { x: cv.x, ideal: db(cv.ideal), realized: db(cv.realized) } };
  }

  /** |AF|² of the last analysed beam's realized or ideal weights towards (u, v) (the report's pattern view). */
  powerAt(u: number, v: number, which: "realized" | "ideal"): number {
    const ev = which === "realized" ? this.evR : this.evI;
    return ev.power(u - ev.u0, v - ev.v0);
  }

  /** The sampled windows of the last analysed beam (for the report). */
  detail(): PatternDetail {
    const copy = (w: PowerWindow): PowerWindow => ({ ...w, p: w.p.slice(0, w.wm * w.wn), visible: w.visible.slice(0, w.wm * w.wn) });
    return { realized: copy(this.winR), ideal: copy(this.winI), du: this.grid.du, dv: this.grid.dv, phaseErrorDeg: this.phaseErr.slice(), ampErrorDb: this.ampErr.slice() };
  }
}
