/**
 * Element patterns (interface contract, Version 2, "Element pattern and band
 * analysis"). The total far field of the array is AF × the element's field pattern,
 * so the total power pattern is |AF|² × E, with E the element's power pattern:
 * - `cosine`: E(θ) = cos^q θ = (1 − u² − v²)^(q/2) (field cos^(q/2) θ), 0 below the horizon;
 * - `table`: a measured power pattern in dB on a θ/φ grid, interpolated bilinearly in
 *   (θ, φ) by piecewise cubic Hermite (φ periodic; see TablePattern.gainDb), then turned
 *   into linear power; 0 below the horizon.
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
  /** power() for the sampled lobe-search grids (may be a fast close approximation). */
  gridPower(u: number, v: number): number;
}

const DEG = Math.PI / 180;

/**
 * A direction computed to lie on the horizon (cos α, sin α; u0 + Δu) has 1 − u² − v²
 * within a few roundings of 0 either side (~2e-15). Up to this it is the horizon, where
 * cos^q θ is 0 for q > 0: the rounding's cos^q of it was a value like (1e-16)^3.4 =
 * 1e-54, and a beam whose realized pattern has no sidelobe printed psl_db −543 dB, the
 * maximum of that noise along the horizon (5 × 2 triangular lattice, cos^6.71,
 * Dolph–Chebyshev −35 dB, az 19.67° el −2.29°; the brute force has no sidelobe). The
 * band is w ≤ 1e-7 (θ within 6e-6° of 90°), where cos^q θ ≤ 10^(−7q): −70 dB at q = 1.
 */
export const HORIZON_ROUNDING = 1e-14;

class CosinePattern implements ElementPattern {
  private readonly a: number;
  constructor(readonly spec: ElementSpec & { pattern: "cosine" }) {
    this.a = spec.exponent / 2;
  }
  power(u: number, v: number): number {
    const t = 1 - u * u - v * v;
    // within a rounding past the horizon is the horizon (q = 0 radiates there)
    if (t < 0 && t < -1e-12) return 0;
    if (this.a === 0) return 1;
    return t <= HORIZON_ROUNDING ? 0 : Math.pow(t, this.a);
  }
  gridPower(u: number, v: number): number {
    return this.power(u, v);
  }
  derivs(u: number, v: number, o: ElementDerivs): ElementDerivs {
    const t = 1 - u * u - v * v;
    const a = this.a;
    if (a === 0 && t >= -1e-12) {
      o.p = 1;
      o.pu = o.pv = o.puu = o.pvv = o.puv = 0;
      return o;
    }
    if (t <= HORIZON_ROUNDING) {
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

/** Cubic Hermite on [x0, x0 + h] with values p0, p1 and slopes m0, m1, at fraction s. */
function hermite(h: number, p0: number, p1: number, m0: number, m1: number, s: number): number {
  const s2 = s * s, s3 = s2 * s;
  return (2 * s3 - 3 * s2 + 1) * p0 + (s3 - 2 * s2 + s) * h * m0 + (3 * s2 - 2 * s3) * p1 + (s3 - s2) * h * m1;
}

/**
 * Keep a knot slope m between secants da and db from overshooting: 0 at a local
 * extremum of the data, else at most 3·min(|da|, |db|) (the monotone cubic limiter of
 * Fritsch & Carlson, SIAM J. Numer. Anal. 17, 1980; from memory). A measured table's
 * floor (e.g. −60 dB at the horizon) then cannot make the interpolant ring above the data.
 */
function limit(m: number, da: number, db: number): number {
  if (!(da * db > 0) || !(m * da > 0)) return 0;
  const lim = 3 * Math.min(Math.abs(da), Math.abs(db));
  return Math.abs(m) > lim ? Math.sign(m) * lim : m;
}

/** Slope at the middle knot of three (spacings ha, hb): the parabola through them (exact for quadratics), limited. */
function slope3(ha: number, hb: number, pa: number, p: number, pb: number): number {
  const da = (p - pa) / ha, db = (pb - p) / hb;
  return limit((hb * da + ha * db) / (ha + hb), da, db);
}

/** Grid raster for the sampled windows: side of the u-v raster of the interpolant. */
const RASTER = 513;

class TablePattern implements ElementPattern {
  private readonly nt: number;
  private readonly np: number;
  private raster: Float64Array | null = null;
  constructor(readonly spec: ElementSpec & { pattern: "table" }) {
    this.nt = spec.thetaDeg.length;
    this.np = spec.phiDeg.length;
  }
  /** Gain (dB) at θ row i, interpolated along φ (periodic cubic Hermite; one φ: the row's value). */
  private row(i: number, ph: number): number {
    const { phiDeg: phi, gainDb: g } = this.spec;
    const np = this.np;
    if (np === 1) return g[i]!;
    // φ into [φ0, φ0 + 360)
    let x = ph - phi[0]!;
    x -= 360 * Math.floor(x / 360);
    x += phi[0]!;
    const j = x >= phi[np - 1]! ? np - 1 : interval(phi, x);
    const at = (k: number) => g[i * np + ((k % np) + np) % np]!;
    const knot = (k: number) => phi[((k % np) + np) % np]! + 360 * Math.floor(k / np);
    const x0 = knot(j), x1 = knot(j + 1);
    const h = x1 - x0;
    const m0 = slope3(x0 - knot(j - 1), h, at(j - 1), at(j), at(j + 1));
    const m1 = slope3(h, knot(j + 2) - x1, at(j), at(j + 1), at(j + 2));
    return hermite(h, at(j), at(j + 1), m0, m1, (x - x0) / h);
  }
  /**
   * Interpolated gain (dB) at (θ, φ) in degrees, θ ≤ 90: piecewise cubic Hermite along
   * φ (periodic) and then along θ, with slopes from the parabola through neighbouring
   * knots (one-sided at θ's ends), limited so that it never overshoots the data. It
   * passes through every table value, has a continuous slope, and reproduces a smooth
   * monotone quadratic exactly.
   */
  gainDb(thetaDeg: number, phiDeg: number): number {
    const th = this.spec.thetaDeg;
    const nt = this.nt;
    if (nt === 1) return this.row(0, phiDeg);
    const i = Math.min(interval(th, thetaDeg), nt - 2);
    const h = th[i + 1]! - th[i]!;
    const p0 = this.row(i, phiDeg), p1 = this.row(i + 1, phiDeg);
    const pm = i > 0 ? this.row(i - 1, phiDeg) : NaN;
    const pp = i + 2 < nt ? this.row(i + 2, phiDeg) : NaN;
    let m0: number, m1: number;
    if (i > 0) m0 = slope3(th[i]! - th[i - 1]!, h, pm, p0, p1);
    else if (nt > 2) {
      const d0 = (p1 - p0) / h, d1 = (pp - p1) / (th[2]! - th[1]!);
      m0 = limit(d0 - (h * (d1 - d0)) / (h + th[2]! - th[1]!), d0, d0);
    } else m0 = (p1 - p0) / h;
    if (i + 2 < nt) m1 = slope3(h, th[i + 2]! - th[i + 1]!, p0, p1, pp);
    else if (nt > 2) {
      const hp = th[i]! - th[i - 1]!;
      const dp = (p0 - pm) / hp, d0 = (p1 - p0) / h;
      m1 = limit(d0 + (h * (d0 - dp)) / (hp + h), d0, d0);
    } else m1 = (p1 - p0) / h;
    return hermite(h, p0, p1, m0, m1, (thetaDeg - th[i]!) / h);
  }
  power(u: number, v: number): number {
    let s = u * u + v * v;
    // a horizon point computed in doubles (cos α, sin α; u0 + Δu) lands a rounding past
    // u² + v² = 1 about as often as before it: it is on the horizon (it had been 0 for
    // about a fifth of the horizon trace's samples)
    if (s > 1) {
      if (s > 1 + 1e-12) return 0;
      s = 1;
    }
    const theta = Math.asin(Math.sqrt(s)) / DEG;
    const phi = s === 0 ? 0 : Math.atan2(v, u) / DEG;
    return Math.pow(10, this.gainDb(theta, phi) / 10);
  }
  /**
   * For the sampled grids only (lobe search): bilinear lookup in a RASTER² u-v raster
   * of power(). Every refined value (peaks, sidelobes, gain) uses power() itself.
   */
  gridPower(u: number, v: number): number {
    if (u * u + v * v > 1) return 0;
    if (!this.raster) {
      const r = (this.raster = new Float64Array(RASTER * RASTER));
      for (let j = 0; j < RASTER; j++)
        for (let i = 0; i < RASTER; i++) {
          const uu = -1 + (2 * i) / (RASTER - 1), vv = -1 + (2 * j) / (RASTER - 1);
          // just past the horizon: the horizon's value, so cells near it interpolate sensibly
          const s = Math.hypot(uu, vv);
          r[j * RASTER + i] = s > 1 ? this.power(uu / s, vv / s) : this.power(uu, vv);
        }
    }
    const x = ((u + 1) * (RASTER - 1)) / 2, y = ((v + 1) * (RASTER - 1)) / 2;
    const i = Math.min(RASTER - 2, Math.floor(x)), j = Math.min(RASTER - 2, Math.floor(y));
    const fx = x - i, fy = y - j;
    const r = this.raster;
    const a = r[j * RASTER + i]! + fx * (r[j * RASTER + i + 1]! - r[j * RASTER + i]!);
    const b = r[(j + 1) * RASTER + i]! + fx * (r[(j + 1) * RASTER + i + 1]! - r[(j + 1) * RASTER + i]!);
    return a + fy * (b - a);
  }
  /**
   * Derivatives by central differences of the interpolant (smooth within a cell, with
   * a continuous slope across cells): they steer the Newton steps, and every accepted
   * step is judged on exact values of the total pattern.
   */
  derivs(u: number, v: number, o: ElementDerivs): ElementDerivs {
    return centralDerivs(this.powerAt, u, v, o);
  }
  /**
   * power() continued past the horizon by the horizon's value along the radius, for the
   * central differences only: within their step (1e-5) of the horizon they had straddled
   * the drop to 0 and steered the Newton steps away from a peak on the horizon (a pattern
   * rising toward it: the peak printed 0.08 dB low, 0.16° off).
   */
  private readonly powerAt = (u: number, v: number) => {
    const s = u * u + v * v;
    if (s <= 1) return this.power(u, v);
    const r = Math.sqrt(s);
    return this.power(u / r, v / r);
  };
}

/**
 * Value, gradient and Hessian of f at (u, v) by central differences (step 1e-5; the mixed
 * term from seven values). Used where no closed form is at hand: a tabulated element and
 * the total pattern of a non-planar array.
 */
export function centralDerivs(f: (u: number, v: number) => number, u: number, v: number, o: ElementDerivs): ElementDerivs {
  const h = 1e-5;
  const p0 = f(u, v);
  const pxp = f(u + h, v), pxm = f(u - h, v);
  const pyp = f(u, v + h), pym = f(u, v - h);
  const ppp = f(u + h, v + h), pmm = f(u - h, v - h);
  o.p = p0;
  o.pu = (pxp - pxm) / (2 * h);
  o.pv = (pyp - pym) / (2 * h);
  o.puu = (pxp - 2 * p0 + pxm) / (h * h);
  o.pvv = (pyp - 2 * p0 + pym) / (h * h);
  o.puv = (ppp - pxp - pyp + 2 * p0 - pxm - pym + pmm) / (2 * h * h);
  return o;
}

/**
 * A line array's element pattern as its analysis uses it (README "Element pattern"): the
 * pattern on the cut through the commanded direction along the line, continued across the
 * line's normal plane, so that the total pattern |AF|²·E, like |AF|² alone, depends on the
 * coordinate along the line only and the line rules (peak at the commanded value of the
 * other coordinate, lobes over u ∈ [−1, 1]) keep their meaning. A row (pattern in u):
 * E(u, v0) where u² + v0² ≤ 1; past that chord E at the visible direction nearest the cut,
 * on the horizon at the same u, (u, sign(v0)·√(1 − u²)). A column likewise with u and v
 * exchanged. Without this, the lobe search compared the main lobe at the commanded v0
 * with the same |AF|² ridge nearer boresight, where E is larger: a 8×1 row with cos^1.5,
 * beam at el 89.9°, printed PSL +28.13 dB.
 */
export class LineCutPattern implements ElementPattern {
  get spec(): ElementSpec { return this.inner.spec; }
  /** the commanded value of the coordinate across the line */
  private c0 = 0;
  private readonly inDerivs: ElementDerivs = { p: 0, pu: 0, pv: 0, puu: 0, pvv: 0, puv: 0 };
  private readonly along = (t: number) => this.power(this.row ? t : 0, this.row ? 0 : t);
  constructor(readonly inner: ElementPattern, readonly row: boolean) {}
  /** Set the beam's commanded direction (u0, v0). */
  setBeam(u0: number, v0: number): void { this.c0 = this.row ? v0 : u0; }
  /** the direction (u, v) whose E stands for coordinate t along the line */
  private across(t: number): number {
    const c = this.c0;
    // past the chord: 1e-13 past the horizon, which every pattern takes as the horizon
    // (within 1e-12, see CosinePattern), so that rounding cannot leave a point just inside it
    // (cos^q of a rounding error: −131.6 dB printed as a sidelobe where E is 0)
    return t * t + c * c <= 1 ? c : Math.sign(c) * Math.sqrt(Math.max(0, 1 - t * t + 1e-13));
  }
  power(u: number, v: number): number {
    const t = this.row ? u : v, c = this.across(t);
    return this.row ? this.inner.power(t, c) : this.inner.power(c, t);
  }
  gridPower(u: number, v: number): number {
    const t = this.row ? u : v, c = this.c0;
    // past the chord the exact pattern on the horizon (a table's raster is 0 past it)
    if (t * t + c * c > 1) return this.power(u, v);
    return this.row ? this.inner.gridPower(t, c) : this.inner.gridPower(c, t);
  }
  derivs(u: number, v: number, out: ElementDerivs): ElementDerivs {
    const t = this.row ? u : v, c = this.c0;
    let p: number, d1: number, d2: number;
    if (t * t + c * c < 1 - 1e-9) {
      // on the cut: the pattern's own derivatives along the line
      const d = this.row ? this.inner.derivs(t, c, this.inDerivs) : this.inner.derivs(c, t, this.inDerivs);
      p = d.p; d1 = this.row ? d.pu : d.pv; d2 = this.row ? d.puu : d.pvv;
    } else {
      // along the horizon past the chord (and at its end): differences of the continued pattern
      const h = 1e-5, f0 = this.along(t), fp = this.along(t + h), fm = this.along(t - h);
      p = f0; d1 = (fp - fm) / (2 * h); d2 = (fp - 2 * f0 + fm) / (h * h);
    }
    out.p = p; out.pu = this.row ? d1 : 0; out.pv = this.row ? 0 : d1;
    out.puu = this.row ? d2 : 0; out.pvv = this.row ? 0 : d2; out.puv = 0;
    return out;
  }
}

const made = new WeakMap<ElementSpec, ElementPattern>();
/** One pattern object per spec (the analyzers of every frequency share a table's raster). */
export function makeElementPattern(spec: ElementSpec): ElementPattern {
  let e = made.get(spec);
  if (!e) made.set(spec, (e = spec.pattern === "cosine" ? new CosinePattern(spec) : new TablePattern(spec)));
  return e;
}

/** Smallest normal double: below it a linear power has lost precision (or is 0). */
const MIN_NORMAL = 2.2250738585072014e-308;

/**
 * scan_loss_db: element power at boresight minus at (u, v), dB. A steep cosine close to
 * the horizon has a linear power below the doubles' normal range (cos^100 θ at θ = 89.99°
 * is 1e-376): there the loss is taken in dB from the formula, −10·(q/2)·log10(1 − u² − v²)
 * (it had been 10·log10(1/0) = Infinity, an internal error).
 */
export function scanLossDb(e: ElementPattern, u: number, v: number): number {
  const p = e.power(u, v);
  if (p >= MIN_NORMAL || e.spec.pattern !== "cosine") return 10 * Math.log10(e.power(0, 0) / p);
  return -5 * e.spec.exponent * Math.log10(1 - u * u - v * v);
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
