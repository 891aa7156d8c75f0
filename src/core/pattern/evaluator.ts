/**
 * Exact array factor of de-steered weights at an offset (Δu, Δv) from the beam
 * direction d̂:  F(Δ) = Σ w̃_n · exp(jk(x_n·Δu + y_n·Δv + z_n·(w(d̂+Δ) − w0))),
 * with w̃_n = w_n·exp(jk r_n·d̂). |F(Δ)|² is |AF(d̂ + Δ)|². Phasors are built per
 * distinct coordinate (a lattice has only `columns` distinct x and `rows` distinct y),
 * so one evaluation costs a few dozen sin/cos and one pass over the elements.
 */
import { centralDerivs, weightDerivs, type ElementDerivs, type ElementPattern } from "../element.js";

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
  private readonly cx: Float64Array;
  private readonly sx: Float64Array;
  private readonly cy: Float64Array;
  private readonly sy: Float64Array;
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
  /** elements ordered by distinct-y group; group g spans order[groupStart[g] … groupStart[g+1]) */
  private readonly order: Int32Array;
  private readonly groupStart: Int32Array;
  private readonly kx2: Float64Array;
  /** elements already in group order (order[q] = q): the loops index them directly */
  private readonly inOrder: boolean;
  /**
   * Lattices: in order, and group g's elements take the distinct x values colBase[g],
   * colBase[g] + 1, … in turn, so an element's column needs no lookup; kxd, kxd2: k·x
   * and (k·x)² per distinct x. null otherwise.
   */
  private readonly colBase: Int32Array | null;
  private readonly kxd: Float64Array;
  private readonly kxd2: Float64Array;

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
    const ng = this.dy.values.length;
    const counts = new Int32Array(ng + 1);
    for (let i = 0; i < this.n; i++) counts[this.dy.index[i]! + 1]!++;
    for (let g = 0; g < ng; g++) counts[g + 1]! += counts[g]!;
    this.groupStart = counts.slice();
    const fillAt = counts.slice();
    this.order = new Int32Array(this.n);
    for (let i = 0; i < this.n; i++) this.order[fillAt[this.dy.index[i]!]!++] = i;
    this.kx2 = Float64Array.from(this.kx, (v) => v * v);
    this.inOrder = this.order.every((v, q) => v === q);
    this.kxd = Float64Array.from(this.dx.values, (v) => k * v);
    this.kxd2 = Float64Array.from(this.kxd, (v) => v * v);
    let seq = this.inOrder;
    const base = new Int32Array(ng);
    for (let g = 0; g < ng && seq; g++) {
      const q0 = this.groupStart[g]!;
      base[g] = this.dx.index[q0]!;
      for (let q = q0; q < this.groupStart[g + 1]! && seq; q++) {
        // the same k·x either way (x equals its distinct value), so the sums are unchanged
        if (this.dx.index[q] !== base[g]! + (q - q0) || this.kx[q] !== this.kxd[this.dx.index[q]!]) seq = false;
      }
    }
    this.colBase = seq ? base : null;
  }
  private readonly kScale: number;

  setBeam(u0: number, v0: number, w0: number): void {
    this.u0 = u0;
    this.v0 = v0;
    this.w0 = w0;
  }

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
    this.phasors(du, dv);
    const { cx, sx, cy, sy, wr, wi } = this;
    const xi = this.dx.index;
    const yi = this.dy.index;
    let re = 0;
    let im = 0;
    let dz = 0;
    if (!this.planar) {
      const u = this.u0 + du;
      const v = this.v0 + dv;
      const s = 1 - u * u - v * v;
      dz = (s > 0 ? Math.sqrt(s) : 0) - this.w0;
    }
    if (this.planar) {
      const { order, groupStart } = this;
      for (let g = 0; g + 1 < groupStart.length; g++) {
        let sr = 0, si = 0;
        const q0 = groupStart[g]!, q1 = groupStart[g + 1]!;
        const colBase = this.colBase;
        if (colBase)
          for (let i = q0, a = colBase[g]!; i < q1; i++, a++) {
            const c = cx[a]!, s = sx[a]!, w_r = wr[i]!, w_i = wi[i]!;
            sr += w_r * c - w_i * s;
            si += w_r * s + w_i * c;
          }
        else if (this.inOrder)
          for (let i = q0; i < q1; i++) {
            const a = xi[i]!;
            const c = cx[a]!, s = sx[a]!, w_r = wr[i]!, w_i = wi[i]!;
            sr += w_r * c - w_i * s;
            si += w_r * s + w_i * c;
          }
        else
          for (let q = q0; q < q1; q++) {
            const i = order[q]!;
            const a = xi[i]!;
            sr += wr[i]! * cx[a]! - wi[i]! * sx[a]!;
            si += wr[i]! * sx[a]! + wi[i]! * cx[a]!;
          }
        re += cy[g]! * sr - sy[g]! * si;
        im += cy[g]! * si + sy[g]! * sr;
      }
      this.fOut[0] = re;
      this.fOut[1] = im;
      return this.fOut;
    }
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
    // grouped by row: S0 = Σ w·ex, S1 = Σ X·w·ex, S2 = Σ X²·w·ex per distinct y, then
    // F = Σ ey·S0, F_u = jΣ ey·S1, F_uu = −Σ ey·S2, F_v = jΣ Y·ey·S0, F_vv = −Σ Y²·ey·S0, F_uv = −Σ Y·ey·S1
    this.phasors(du, dv);
    const { cx, sx, cy, sy, wr, wi, kx, kx2, order, groupStart, inOrder, colBase, kxd, kxd2 } = this;
    const xi = this.dx.index;
    const yv = this.dy.values;
    const k = this.kScale;
    let fr = 0, fi = 0, fur = 0, fui = 0, fvr = 0, fvi = 0;
    let fuur = 0, fuui = 0, fvvr = 0, fvvi = 0, fuvr = 0, fuvi = 0;
    for (let g = 0; g + 1 < groupStart.length; g++) {
      let s0r = 0, s0i = 0, s1r = 0, s1i = 0, s2r = 0, s2i = 0;
      const q0 = groupStart[g]!, q1 = groupStart[g + 1]!;
      if (colBase) {
        for (let i = q0, a = colBase[g]!; i < q1; i++, a++) {
          const c = cx[a]!, s = sx[a]!, w_r = wr[i]!, w_i = wi[i]!;
          const tr = w_r * c - w_i * s;
          const ti = w_r * s + w_i * c;
          const k1 = kxd[a]!, k2 = kxd2[a]!;
          s0r += tr;
          s0i += ti;
          s1r += k1 * tr;
          s1i += k1 * ti;
          s2r += k2 * tr;
          s2i += k2 * ti;
        }
      } else if (inOrder)
        for (let i = q0; i < q1; i++) {
          const a = xi[i]!;
          const c = cx[a]!, s = sx[a]!, w_r = wr[i]!, w_i = wi[i]!;
          const tr = w_r * c - w_i * s;
          const ti = w_r * s + w_i * c;
          const k1 = kx[i]!, k2 = kx2[i]!;
          s0r += tr;
          s0i += ti;
          s1r += k1 * tr;
          s1i += k1 * ti;
          s2r += k2 * tr;
          s2i += k2 * ti;
        }
      else
        for (let q = q0; q < q1; q++) {
          const i = order[q]!;
          const a = xi[i]!;
          const tr = wr[i]! * cx[a]! - wi[i]! * sx[a]!;
          const ti = wr[i]! * sx[a]! + wi[i]! * cx[a]!;
          s0r += tr;
          s0i += ti;
          s1r += kx[i]! * tr;
          s1i += kx[i]! * ti;
          s2r += kx2[i]! * tr;
          s2i += kx2[i]! * ti;
        }
      const er = cy[g]!, ei = sy[g]!;
      const Y = k * yv[g]!;
      const a0r = er * s0r - ei * s0i, a0i = er * s0i + ei * s0r;
      const a1r = er * s1r - ei * s1i, a1i = er * s1i + ei * s1r;
      const a2r = er * s2r - ei * s2i, a2i = er * s2i + ei * s2r;
      fr += a0r;
      fi += a0i;
      fur -= a1i;
      fui += a1r;
      fvr -= Y * a0i;
      fvi += Y * a0r;
      fuur -= a2r;
      fuui -= a2i;
      fvvr -= Y * Y * a0r;
      fvvi -= Y * Y * a0i;
      fuvr -= Y * a1r;
      fuvi -= Y * a1i;
    }
    o.p = fr * fr + fi * fi;
    o.pu = 2 * (fr * fur + fi * fui);
    o.pv = 2 * (fr * fvr + fi * fvi);
    o.puu = 2 * (fur * fur + fui * fui + fr * fuur + fi * fuui);
    o.pvv = 2 * (fvr * fvr + fvi * fvi + fr * fvvr + fi * fvvi);
    o.puv = 2 * (fur * fvr + fui * fvi + fr * fuvr + fi * fuvi);
    return o;
  }
}
