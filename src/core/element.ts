/**
 * Element patterns (interface contract, Version 2, "Element pattern and band
 * analysis"). The total far field of the array is AF × the element's field pattern,
 * so the total power pattern is |AF|² × E, with E the element's power pattern:
 * - `cosine`: E(θ) = cos^q θ = (1 − u² − v²)^(q/2) (field cos^(q/2) θ), 0 below the horizon;
 * - `table`: a measured power pattern in dB on a θ/φ grid, interpolated bilinearly in
 *   (θ, φ) on the sphere (φ periodic), then turned into linear power; 0 below the horizon.
 * Without an element pattern the elements are isotropic (E ≡ 1, version 1).
 *
 * The pattern code applies E as a weight: to every sampled |AF|² cell (weightWindow)
 * and inside the exact evaluator (product rule for the derivatives), so the refined
 * peaks and sidelobes are those of the total pattern.
 */

/** Structured-clone safe description (travels to the analysis workers inside the Plan). */
export type ElementSpec =
  | { pattern: "cosine"; exponent: number }
  | {
      pattern: "table";
      /** distinct θ values, ascending, from 0 to ≥ 90 (deg) */
      thetaDeg: Float64Array;
      /** distinct φ values, ascending, within [0, 360] (deg); one value: rotationally symmetric */
      phiDeg: Float64Array;
      /** gain_db[iθ·nφ + iφ] */
      gainDb: Float64Array;
    };

export interface ElementDerivs {
  p: number;
  pu: number;
  pv: number;
  puu: number;
  pvv: number;
  puv: number;
}

export interface ElementPattern {
  readonly spec: ElementSpec;
  /** Linear power pattern at the direction (u, v) (upper hemisphere; 0 on or past the horizon for cosine, q > 0). */
  power(u: number, v: number): number;
  /** Power and its first and second derivatives in (u, v). */
  derivs(u: number, v: number, out: ElementDerivs): ElementDerivs;
}

const DEG = Math.PI / 180;

class CosinePattern implements ElementPattern {
  private readonly a: number;
  constructor(readonly spec: ElementSpec & { pattern: "cosine" }) {
    this.a = spec.exponent / 2;
  }
  power(u: number, v: number): number {
    const t = 1 - u * u - v * v;
    if (t < 0) return 0;
    if (this.a === 0) return 1;
    return t === 0 ? 0 : Math.pow(t, this.a);
  }
  derivs(u: number, v: number, o: ElementDerivs): ElementDerivs {
    const t = 1 - u * u - v * v;
    const a = this.a;
    if (a === 0 && t >= 0) {
      o.p = 1;
      o.pu = o.pv = o.puu = o.pvv = o.puv = 0;
      return o;
    }
    if (t <= 0) {
      o.p = o.pu = o.pv = o.puu = o.pvv = o.puv = 0;
      return o;
    }
    // E = t^a, t = 1 − u² − v²: E_u = −2a·u·t^(a−1), E_uu = −2a·t^(a−1) + 4a(a−1)·u²·t^(a−2)
    const e = Math.pow(t, a);
    const e1 = e / t;
    const e2 = e1 / t;
    o.p = e;
    o.pu = -2 * a * u * e1;
    o.pv = -2 * a * v * e1;
    o.puu = -2 * a * e1 + 4 * a * (a - 1) * u * u * e2;
    o.pvv = -2 * a * e1 + 4 * a * (a - 1) * v * v * e2;
    o.puv = 4 * a * (a - 1) * u * v * e2;
    return o;
  }
}

/** Index of the interval [x[i], x[i+1]] holding t (x ascending, t within [x0, x_last]). */
function interval(x: Float64Array, t: number): number {
  let lo = 0, hi = x.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (x[mid]! <= t) lo = mid;
    else hi = mid;
  }
  return lo;
}

class TablePattern implements ElementPattern {
  private readonly nt: number;
  private readonly np: number;
  /** φ knots with the wrap-around knot appended (φ0 + 360) */
  private readonly phi: Float64Array;
  constructor(readonly spec: ElementSpec & { pattern: "table" }) {
    this.nt = spec.thetaDeg.length;
    this.np = spec.phiDeg.length;
    const p = spec.phiDeg;
    this.phi = new Float64Array(this.np + 1);
    this.phi.set(p);
    this.phi[this.np] = p[0]! + 360;
  }
  /** Interpolated gain (dB) at (θ, φ) in degrees, θ ≤ 90. */
  gainDb(thetaDeg: number, phiDeg: number): number {
    const { thetaDeg: th, gainDb: g } = this.spec;
    const np = this.np;
    const i = interval(th, thetaDeg);
    const ft = th.length > 1 ? (thetaDeg - th[i]!) / (th[i + 1]! - th[i]!) : 0;
    const i1 = Math.min(i + 1, this.nt - 1);
    if (np === 1) return g[i]! + ft * (g[i1]! - g[i]!);
    // φ into [φ0, φ0 + 360)
    let ph = phiDeg - this.phi[0]!;
    ph -= 360 * Math.floor(ph / 360);
    ph += this.phi[0]!;
    const j = interval(this.phi, ph);
    const fp = (ph - this.phi[j]!) / (this.phi[j + 1]! - this.phi[j]!);
    const j1 = (j + 1) % np;
    const a = g[i * np + j]! + fp * (g[i * np + j1]! - g[i * np + j]!);
    const b = g[i1 * np + j]! + fp * (g[i1 * np + j1]! - g[i1 * np + j]!);
    return a + ft * (b - a);
  }
  power(u: number, v: number): number {
    const s = u * u + v * v;
    if (s > 1) return 0;
    const theta = Math.asin(Math.sqrt(s)) / DEG;
    const phi = s === 0 ? 0 : Math.atan2(v, u) / DEG;
    return Math.pow(10, this.gainDb(theta, phi) / 10);
  }
  /**
   * The interpolant is piecewise smooth: its derivatives are taken by central
   * differences (the refinement only needs them to steer Newton steps; every accepted
   * step is judged on exact values of the total pattern).
   */
  derivs(u: number, v: number, o: ElementDerivs): ElementDerivs {
    const h = 1e-5;
    const p0 = this.power(u, v);
    const pxp = this.power(u + h, v), pxm = this.power(u - h, v);
    const pyp = this.power(u, v + h), pym = this.power(u, v - h);
    const ppp = this.power(u + h, v + h), pmm = this.power(u - h, v - h);
    o.p = p0;
    o.pu = (pxp - pxm) / (2 * h);
    o.pv = (pyp - pym) / (2 * h);
    o.puu = (pxp - 2 * p0 + pxm) / (h * h);
    o.pvv = (pyp - 2 * p0 + pym) / (h * h);
    o.puv = (ppp - pxp - pyp + 2 * p0 - pxm - pym + pmm) / (2 * h * h);
    return o;
  }
}

export function makeElementPattern(spec: ElementSpec): ElementPattern {
  return spec.pattern === "cosine" ? new CosinePattern(spec) : new TablePattern(spec);
}

/** scan_loss_db: element power at boresight minus at (u, v), dB. */
export function scanLossDb(e: ElementPattern, u: number, v: number): number {
  return 10 * Math.log10(e.power(0, 0) / e.power(u, v));
}

/**
 * Multiply the de-steered evaluator's |AF|² and its derivatives (in (Δu, Δv)) by the
 * element pattern at the absolute direction (u, v) (product rule). `af` is overwritten.
 */
export function weightDerivs(af: ElementDerivs, e: ElementDerivs): ElementDerivs {
  const { p, pu, pv, puu, pvv, puv } = af;
  af.p = p * e.p;
  af.pu = pu * e.p + p * e.pu;
  af.pv = pv * e.p + p * e.pv;
  af.puu = puu * e.p + 2 * pu * e.pu + p * e.puu;
  af.pvv = pvv * e.p + 2 * pv * e.pv + p * e.pvv;
  af.puv = puv * e.p + pu * e.pv + pv * e.pu + p * e.puv;
  return af;
}
