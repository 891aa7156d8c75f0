/**
 * Exact array factor of de-steered weights at an offset (Δu, Δv) from the beam
 * direction d̂:  F(Δ) = Σ w̃_n · exp(jk(x_n·Δu + y_n·Δv + z_n·(w(d̂+Δ) − w0))),
 * with w̃_n = w_n·exp(jk r_n·d̂). |F(Δ)|² is |AF(d̂ + Δ)|². Phasors are built per
 * distinct coordinate (a lattice has only `columns` distinct x and `rows` distinct y),
 * so one evaluation costs a few dozen sin/cos and one pass over the elements. For planar
 * arrays the phasors and that pass run in WebAssembly (wasm/evaluator.ts: musl's sincos,
 * the same sums in the same order); other arrays' in JavaScript (Math.cos, Math.sin).
 */
import { centralDerivs, weightDerivs, type ElementDerivs, type ElementPattern } from "../element.js";
import { KERNEL_BASE, kernelInstance } from "./kernels.js";
import { WASM_BASE64 } from "./wasm/evaluator.js";

interface EvaluatorKernels {
  memory: WebAssembly.Memory;
  setup(n: number, nxd: number, ng: number, mode: number, k: number, base: number): number;
  offset(i: number): number;
  field(du: number, dv: number): void;
  derivs(du: number, dv: number): void;
}

export interface Distinct {
  values: Float64Array;
  index: Int32Array;
}

export function distinct(coord: Float64Array): Distinct {
  const map = new Map<number, number>();
  const values: number[] = [];
  const index = new Int32Array(coord.length);
  for (let i = 0; i < coord.length; i++) {
    const c = coord[i]!;
    let k = map.get(c);
    if (k === undefined) {
      k = values.length;
      map.set(c, k);
      values.push(c);
    }
    index[i] = k;
  }
  return { values: Float64Array.from(values), index };
}

/** |AF|² and its first and second derivatives in u and v (the same fields as an element's). */
export type PowerDerivs = ElementDerivs;

export class AfEvaluator {
  readonly n: number;
  private readonly dx: Distinct;
  private readonly dy: Distinct;
  private readonly kx: Float64Array;
  private readonly kz: Float64Array;
  readonly planar: boolean;
  /** The pattern does not vary along u (one distinct x) or along v (one distinct y): a line array. */
  readonly lockU: boolean;
  readonly lockV: boolean;
  private cx: Float64Array;
  private sx: Float64Array;
  private cy: Float64Array;
  private sy: Float64Array;
  /** de-steered weights */
  wr: Float64Array;
  wi: Float64Array;
  u0 = 0;
  v0 = 0;
  w0 = 1;
  readonly out: PowerDerivs = { p: 0, pu: 0, pv: 0, puu: 0, pvv: 0, puv: 0 };
  /** this.power as a function value, for the central differences of non-planar arrays */
  private readonly powerAt = (du: number, dv: number) => this.power(du, dv);
  /**
   * Element pattern: when set, power() and derivs() give the total pattern
   * |AF|²·E(d̂ + Δ) (field() stays the array factor alone). null: isotropic elements.
   */
  element: ElementPattern | null = null;
  private readonly eOut: ElementDerivs = { p: 0, pu: 0, pv: 0, puu: 0, pvv: 0, puv: 0 };

  constructor(x: Float64Array, y: Float64Array, z: Float64Array, k: number) {
    this.n = x.length;
    this.dx = distinct(x);
    this.dy = distinct(y);
    this.kx = Float64Array.from(x, (v) => k * v);
    this.kz = Float64Array.from(z, (v) => k * v);
    this.planar = z.every((v) => v === 0);
    this.lockU = this.planar && this.dx.values.length === 1;
    this.lockV = this.planar && this.dy.values.length === 1;
    this.cx = new Float64Array(this.dx.values.length);
    this.sx = new Float64Array(this.dx.values.length);
    this.cy = new Float64Array(this.dy.values.length);
    this.sy = new Float64Array(this.dy.values.length);
    this.wr = new Float64Array(this.n);
    this.wi = new Float64Array(this.n);
    this.kScale = k;
    if (this.planar) this.kernel = this.planarKernel();
  }
  private readonly kScale: number;
  /** Planar arrays: the element loops of field() and afDerivs() in WebAssembly (wasm/evaluator.ts); null otherwise. */
  private readonly kernel: EvaluatorKernels | null = null;
  private kOut: Float64Array = new Float64Array(0);

  /**
   * The kernel's instance, with this evaluator's arrays moved into its memory: wr, wi
   * (written by callers) become views on it; the kernel takes its phasors itself.
   */
  private planarKernel(): EvaluatorKernels {
    const n = this.n, nxd = this.dx.values.length, ng = this.dy.values.length;
    // elements ordered by distinct-y group: group g spans order[groupStart[g] … groupStart[g+1])
    const groupStart = new Int32Array(ng + 1);
    for (let i = 0; i < n; i++) groupStart[this.dy.index[i]! + 1]!++;
    for (let g = 0; g < ng; g++) groupStart[g + 1]! += groupStart[g]!;
    const fillAt = groupStart.slice();
    const order = new Int32Array(n);
    for (let i = 0; i < n; i++) order[fillAt[this.dy.index[i]!]!++] = i;
    // mode 1: elements already in group order (order[q] = q), indexed directly
    const mode = order.every((v, q) => v === q) ? 1 : 2;
    const K = kernelInstance<EvaluatorKernels>(WASM_BASE64, (k) => k.setup(n, nxd, ng, mode, this.kScale, KERNEL_BASE));
    const mem = K.memory.buffer;
    const f64 = (i: number, len: number, from?: ArrayLike<number>) => { const a = new Float64Array(mem, K.offset(i), len); if (from) a.set(from); return a; };
    const i32 = (i: number, len: number, from: ArrayLike<number>) => new Int32Array(mem, K.offset(i), len).set(from);
    this.kOut = f64(0, 8);
    this.wr = f64(1, n, this.wr);
    this.wi = f64(2, n, this.wi);
    f64(7, n, this.kx);
    f64(8, n, Float64Array.from(this.kx, (v) => v * v));
    f64(9, ng, this.dy.values);
    i32(10, n, order);
    i32(11, ng + 1, groupStart);
    i32(12, n, this.dx.index);
    f64(13, nxd, this.dx.values);
    return K;
  }

  setBeam(u0: number, v0: number, w0: number): void {
    this.u0 = u0;
    this.v0 = v0;
    this.w0 = w0;
  }

  /** cx, sx, cy, sy at (Δu, Δv): non-planar arrays (planar ones' kernel takes its own). */
  private phasors(du: number, dv: number): void {
    const k = this.kScale;
    const xv = this.dx.values;
    for (let j = 0; j < xv.length; j++) {
      const a = k * xv[j]! * du;
      this.cx[j] = Math.cos(a);
      this.sx[j] = Math.sin(a);
    }
    const yv = this.dy.values;
    for (let j = 0; j < yv.length; j++) {
      const a = k * yv[j]! * dv;
      this.cy[j] = Math.cos(a);
      this.sy[j] = Math.sin(a);
    }
  }

  /** |F(Δ)|² (times the element power pattern when there is one) */
  power(du: number, dv: number): number {
    const f = this.field(du, dv);
    const p = f[0] * f[0] + f[1] * f[1];
    return this.element ? p * this.element.power(this.u0 + du, this.v0 + dv) : p;
  }

  private readonly fOut: [number, number] = [0, 0];
  /** F(Δ) as [re, im]. */
  field(du: number, dv: number): [number, number] {
    if (this.kernel) {
      this.kernel.field(du, dv);
      this.fOut[0] = this.kOut[0]!;
      this.fOut[1] = this.kOut[1]!;
      return this.fOut;
    }
    this.phasors(du, dv);
    // not planar: the z term per element
    const { cx, sx, cy, sy, wr, wi } = this;
    const xi = this.dx.index;
    const yi = this.dy.index;
    let re = 0;
    let im = 0;
    const u = this.u0 + du;
    const v = this.v0 + dv;
    const s = 1 - u * u - v * v;
    const dz = (s > 0 ? Math.sqrt(s) : 0) - this.w0;
    for (let i = 0; i < this.n; i++) {
      const a = xi[i]!;
      const b = yi[i]!;
      let er = cx[a]! * cy[b]! - sx[a]! * sy[b]!;
      let ei = cx[a]! * sy[b]! + sx[a]! * cy[b]!;
      if (dz !== 0) {
        const t = this.kz[i]! * dz;
        const c = Math.cos(t);
        const s2 = Math.sin(t);
        const r2 = er * c - ei * s2;
        ei = er * s2 + ei * c;
        er = r2;
      }
      re += wr[i]! * er - wi[i]! * ei;
      im += wr[i]! * ei + wi[i]! * er;
    }
    this.fOut[0] = re;
    this.fOut[1] = im;
    return this.fOut;
  }

  /**
   * |F|² and its first and second derivatives in (Δu, Δv). Planar arrays analytically;
   * others by central differences. With an element pattern: the total pattern's
   * (product rule with the element's own derivatives).
   */
  derivs(du: number, dv: number): PowerDerivs {
    const o = this.afDerivs(du, dv);
    if (!this.element || !this.planar) return o; // non-planar: power() already includes E
    return weightDerivs(o, this.element.derivs(this.u0 + du, this.v0 + dv, this.eOut));
  }

  private afDerivs(du: number, dv: number): PowerDerivs {
    const o = this.out;
    if (!this.planar) return centralDerivs(this.powerAt, du, dv, o);
    // grouped by row (wasm/evaluator.ts): S0 = Σ w·ex, S1 = Σ X·w·ex, S2 = Σ X²·w·ex per distinct y, then
    // F = Σ ey·S0, F_u = jΣ ey·S1, F_uu = −Σ ey·S2, F_v = jΣ Y·ey·S0, F_vv = −Σ Y²·ey·S0, F_uv = −Σ Y·ey·S1
    const K = this.kOut;
    this.kernel!.derivs(du, dv);
    o.p = K[0]!;
    o.pu = K[1]!;
    o.pv = K[2]!;
    o.puu = K[3]!;
    o.pvv = K[4]!;
    o.puv = K[5]!;
    return o;
  }
}
