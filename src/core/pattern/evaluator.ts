/**
 * Exact array factor of de-steered weights at an offset (Δu, Δv) from the beam
 * direction d̂:  F(Δ) = Σ w̃_n · exp(jk(x_n·Δu + y_n·Δv + z_n·(w(d̂+Δ) − w0))),
 * with w̃_n = w_n·exp(jk r_n·d̂). |F(Δ)|² is |AF(d̂ + Δ)|². Phasors are built per
 * distinct coordinate (a lattice has only `columns` distinct x and `rows` distinct y),
 * so one evaluation costs a few dozen sin/cos and one pass over the elements.
 */
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

export interface PowerDerivs {
  p: number;
  pu: number;
  pv: number;
  puu: number;
  pvv: number;
  puv: number;
}

export class AfEvaluator {
  readonly n: number;
  private readonly dx: Distinct;
  private readonly dy: Distinct;
  private readonly kx: Float64Array;
  private readonly ky: Float64Array;
  private readonly kz: Float64Array;
  readonly planar: boolean;
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

  constructor(x: Float64Array, y: Float64Array, z: Float64Array, k: number) {
    this.n = x.length;
    this.dx = distinct(x);
    this.dy = distinct(y);
    this.kx = Float64Array.from(x, (v) => k * v);
    this.ky = Float64Array.from(y, (v) => k * v);
    this.kz = Float64Array.from(z, (v) => k * v);
    this.planar = z.every((v) => v === 0);
    this.cx = new Float64Array(this.dx.values.length);
    this.sx = new Float64Array(this.dx.values.length);
    this.cy = new Float64Array(this.dy.values.length);
    this.sy = new Float64Array(this.dy.values.length);
    this.wr = new Float64Array(this.n);
    this.wi = new Float64Array(this.n);
    this.kScale = k;
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

  /** |F(Δ)|² */
  power(du: number, dv: number): number {
    const f = this.field(du, dv);
    return f[0] * f[0] + f[1] * f[1];
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

  /** |F|² and its first and second derivatives in (Δu, Δv). Planar arrays analytically; others by central differences. */
  derivs(du: number, dv: number): PowerDerivs {
    const o = this.out;
    if (!this.planar) {
      const h = 1e-5;
      const p0 = this.power(du, dv);
      const pxp = this.power(du + h, dv);
      const pxm = this.power(du - h, dv);
      const pyp = this.power(du, dv + h);
      const pym = this.power(du, dv - h);
      const ppp = this.power(du + h, dv + h);
      const pmm = this.power(du - h, dv - h);
      o.p = p0;
      o.pu = (pxp - pxm) / (2 * h);
      o.pv = (pyp - pym) / (2 * h);
      o.puu = (pxp - 2 * p0 + pxm) / (h * h);
      o.pvv = (pyp - 2 * p0 + pym) / (h * h);
      o.puv = (ppp - pxp - pyp + 2 * p0 - pxm - pym + pmm) / (2 * h * h);
      return o;
    }
    this.phasors(du, dv);
    const { cx, sx, cy, sy, wr, wi, kx, ky } = this;
    const xi = this.dx.index;
    const yi = this.dy.index;
    let fr = 0, fi = 0, fur = 0, fui = 0, fvr = 0, fvi = 0;
    let fuur = 0, fuui = 0, fvvr = 0, fvvi = 0, fuvr = 0, fuvi = 0;
    for (let i = 0; i < this.n; i++) {
      const a = xi[i]!;
      const b = yi[i]!;
      const er = cx[a]! * cy[b]! - sx[a]! * sy[b]!;
      const ei = cx[a]! * sy[b]! + sx[a]! * cy[b]!;
      const tr = wr[i]! * er - wi[i]! * ei;
      const ti = wr[i]! * ei + wi[i]! * er;
      const X = kx[i]!;
      const Y = ky[i]!;
      fr += tr;
      fi += ti;
      // ∂/∂u: × jX ; ∂²/∂u²: × −X²
      fur -= X * ti;
      fui += X * tr;
      fvr -= Y * ti;
      fvi += Y * tr;
      fuur -= X * X * tr;
      fuui -= X * X * ti;
      fvvr -= Y * Y * tr;
      fvvi -= Y * Y * ti;
      fuvr -= X * Y * tr;
      fuvi -= X * Y * ti;
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
