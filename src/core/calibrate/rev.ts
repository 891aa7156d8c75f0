/**
 * The rotating-element electric-field-vector (REV) method: Mano & Katagi, "A method for
 * measuring amplitude and phase of each radiating element of a phased array antenna",
 * Electronics and Communications in Japan (IEICE Trans., Japanese edition), 1982 (venue
 * details from memory). Every element sits at phase code 0 except the one under test,
 * which steps through its codes while the total power is read.
 *
 * Derivation (done here, in the paper's spirit; derived): let E0 be the total field with
 * every element at code 0 and e the field of the element under test at code 0. With its
 * phase shifter at code k the element's field becomes e·s_k, s_k = ρ_k·e^{jΔ_k} the
 * realized state relative to code 0 (ideal parts: ρ_k = 1, Δ_k = k·360°/2^B), so
 *   E(k) = E0 + e·(s_k − 1),   P(k) = K·|1 + x·(s_k − 1)|²,   x = e/E0,
 * K an unknown scale (the readings share any common reference). Writing a = 1 − x and
 * b = x (so a + b = 1): P(k) = K·(|a|² + ρ_k²|b|² + 2ρ_k|a||b|·cos(Δ_k + ∠b − ∠a)).
 * With ρ_k = 1 this is a sinusoid in Δ, P = α + β·cosΔ + γ·sinΔ, linear in (α, β, γ)
 * and solved by least squares over all codes (code 0 plus ≥ 3 others, any spacing). Then
 *   K = α + β (the reading at Δ = 0, where a + b = 1), R = √(β² + γ²), θ = atan2(γ, β),
 *   |a| + |b| = √((α + R)/K),  ||a| − |b|| = √((α − R)/K),  ∠b − ∠a = −θ,
 *   x = t/(1 + t),  t = b/a = (|b|/|a|)·e^{−jθ}.
 * The readings are symmetric in |a| and |b|: the second root is x' = conj(1 − x), which
 * predicts exactly the same powers. An element's field is far smaller than the whole
 * array's, so the root with the smaller |x| is kept when the other is at least twice as
 * large and the two are told apart beyond the fit's uncertainty. Otherwise a second fact
 * decides: the enabled elements' fields add up to the whole array's, Σ x_n = 1
 * (resolveBySum). A choice neither decides is flagged: it cannot be decided.
 * With measured states (ρ_k ≠ 1) the closed form gives the start (ρ_k² taken as its
 * mean) and both roots are refined on the exact model. Every fit is then refined by
 * Gauss–Newton/Levenberg–Marquardt on (10·log10 K, Re x, Im x), least squares in dB
 * (the readings' own unit), so all codes count alike.
 */
import type { Complex, Flag, MethodField } from "./contract.js";

const C_DB = 10 / Math.LN10;

export interface RevReadings {
  /** realized phase of each code minus that of code 0 (rad) */
  delta: Float64Array;
  /** realized amplitude of each code relative to code 0 */
  rho: Float64Array;
  /** total power (dB, any common reference) */
  powerDb: Float64Array;
}

export interface RevRoot {
  /** x = e/E0: the element's field relative to the whole array's (all at code 0) */
  x: Complex;
  /** 10·log10 K: the total power with every element at code 0 (dB, the readings' reference) */
  referenceDb: number;
  /** rms of reading − model over the codes (dB) */
  residualDb: number;
}

export interface RevFit {
  /** the linear least-squares sinusoid P = α + β·cosΔ + γ·sinΔ (linear power, ρ-weighted) */
  linear: { alpha: number; beta: number; gamma: number };
  roots: [RevRoot, RevRoot];
  kept: 0 | 1;
  decided: boolean;
  why: string;
  /** one-sigma uncertainty of |x| (relative) and of ∠x (rad), from the fit's residual and Jacobian */
  relStd: number;
  phaseStdRad: number;
  /**
   * true when the kept field is within NOISE_FLOOR_SIGMAS of its 1σ of zero: the
   * readings cannot tell the element's field from none (a dead channel, or one at the
   * noise floor), so its phase is not measured and the linearised 1σ does not hold
   */
  belowNoise: boolean;
}

/**
 * A fitted field |x| no larger than this many of its 1σ is not told from zero (derived:
 * with no field, |x̂|/σ is Rayleigh distributed, P(|x̂| ≥ 3σ) = e^{−4.5} ≈ 1.1 %, so
 * noise alone gives such a field at least that often).
 */
export const NOISE_FLOOR_SIGMAS = 3;

export type RevResult = { ok: true; fit: RevFit } | { ok: false; message: string };

/** A 3×3 system by Cramer's rule into `out`; false when (nearly) singular. No allocation. */
function solve3(a: ArrayLike<number>, b: ArrayLike<number>, out: number[] | Float64Array): boolean {
  const a0 = a[0]!, a1 = a[1]!, a2 = a[2]!, a3 = a[3]!, a4 = a[4]!, a5 = a[5]!, a6 = a[6]!, a7 = a[7]!, a8 = a[8]!;
  const c0 = a4 * a8 - a5 * a7, c1 = a5 * a6 - a3 * a8, c2 = a3 * a7 - a4 * a6;
  const det = a0 * c0 + a1 * c1 + a2 * c2;
  let scale = 0;
  for (let i = 0; i < 9; i++) scale = Math.max(scale, Math.abs(a[i]!));
  if (!(Math.abs(det) > 1e-13 * scale * scale * scale)) return false;
  const b0 = b[0]!, b1 = b[1]!, b2 = b[2]!;
  out[0] = (b0 * c0 + b1 * (a2 * a7 - a1 * a8) + b2 * (a1 * a5 - a2 * a4)) / det;
  out[1] = (b0 * c1 + b1 * (a0 * a8 - a2 * a6) + b2 * (a2 * a3 - a0 * a5)) / det;
  out[2] = (b0 * c2 + b1 * (a1 * a6 - a0 * a7) + b2 * (a0 * a4 - a1 * a3)) / det;
  return true;
}

/** The linear least-squares sinusoid over all codes: P = α + β·ρcosΔ + γ·ρsinΔ in linear power. */
export function revLinear(r: RevReadings): { alpha: number; beta: number; gamma: number } | null {
  const A = new Array<number>(9).fill(0);
  const b = [0, 0, 0];
  for (let k = 0; k < r.delta.length; k++) {
    const f = [1, r.rho[k]! * Math.cos(r.delta[k]!), r.rho[k]! * Math.sin(r.delta[k]!)];
    const p = Math.pow(10, r.powerDb[k]! / 10);
    for (let i = 0; i < 3; i++) {
      b[i]! += f[i]! * p;
      for (let j = 0; j < 3; j++) A[i * 3 + j]! += f[i]! * f[j]!;
    }
  }
  const u = [0, 0, 0];
  return solve3(A, b, u) ? { alpha: u[0]!, beta: u[1]!, gamma: u[2]! } : null;
}

/** The two closed-form roots (smaller |x| first) from the sinusoid's coefficients. */
export function revClosedForm(l: { alpha: number; beta: number; gamma: number }): { K: number; roots: [Complex, Complex] } | null {
  const K = l.alpha + l.beta;
  const R = Math.hypot(l.beta, l.gamma);
  if (!(K > 0) || !(R > 0)) return null;
  const theta = Math.atan2(l.gamma, l.beta);
  const S = Math.sqrt(Math.max(0, (l.alpha + R) / K));
  const Dd = Math.sqrt(Math.max(0, (l.alpha - R) / K));
  const small = (S - Dd) / 2, large = (S + Dd) / 2;
  if (!(large > 0)) return null;
  const m = small / large;
  const t = { re: m * Math.cos(-theta), im: m * Math.sin(-theta) };
  // x = t / (1 + t)
  const dr = 1 + t.re, di = t.im, d2 = dr * dr + di * di;
  const x = { re: (t.re * dr + t.im * di) / d2, im: (t.im * dr - t.re * di) / d2 };
  return { K, roots: [x, { re: 1 - x.re, im: x.im }] }; // conj(1 − x) = (1 − Re x) + j·Im x
}

interface Refined {
  L: number;
  x: Complex;
  ssr: number;
  /** (JᵀJ)⁻¹ at the solution, 3×3 row-major, or null */
  inv: number[] | null;
}

/** d_k = ρ_k·e^{jΔ_k} − 1, computed once per fit */
interface Prepared {
  dr: Float64Array;
  di: Float64Array;
  y: Float64Array;
}

function prepare(r: RevReadings): Prepared {
  const n = r.delta.length;
  const dr = new Float64Array(n), di = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    dr[k] = r.rho[k]! * Math.cos(r.delta[k]!) - 1;
    di[k] = r.rho[k]! * Math.sin(r.delta[k]!);
  }
  return { dr, di, y: r.powerDb };
}

function cost(p: Prepared, L: number, xr: number, xi: number): number {
  let s = 0;
  for (let k = 0; k < p.y.length; k++) {
    const dr = p.dr[k]!, di = p.di[k]!;
    const zr = 1 + xr * dr - xi * di, zi = xr * di + xi * dr;
    const z2 = zr * zr + zi * zi;
    if (!(z2 > 0)) return Infinity;
    const e = p.y[k]! - L - C_DB * Math.log(z2);
    s += e * e;
  }
  return s;
}

/** Levenberg–Marquardt on (L, Re x, Im x), least squares in dB. */
function refine(r: RevReadings, L0: number, x0: Complex): Refined {
  const p = prepare(r);
  let L = L0, xr = x0.re, xi = x0.im;
  let c = cost(p, L, xr, xi);
  let lambda = 1e-3;
  const n = p.y.length;
  const A = new Array<number>(9);
  const g = [0, 0, 0];
  const normal = (L: number, xr: number, xi: number) => {
    A.fill(0);
    g[0] = g[1] = g[2] = 0;
    for (let k = 0; k < n; k++) {
      const dr = p.dr[k]!, di = p.di[k]!;
      const zr = 1 + xr * dr - xi * di, zi = xr * di + xi * dr;
      const z2 = zr * zr + zi * zi;
      const e = p.y[k]! - L - C_DB * Math.log(z2);
      // ∂|z|²/∂xr = 2·Re(z̄·d), ∂|z|²/∂xi = 2·Re(z̄·jd) = −2·Im(z̄·d)
      const j1 = (C_DB * 2 * (zr * dr + zi * di)) / z2, j2 = (C_DB * -2 * (zr * di - zi * dr)) / z2;
      g[0]! += e;
      g[1]! += j1 * e;
      g[2]! += j2 * e;
      A[0]! += 1;
      A[1]! += j1;
      A[2]! += j2;
      A[4]! += j1 * j1;
      A[5]! += j1 * j2;
      A[8]! += j2 * j2;
    }
    A[3] = A[1]!;
    A[6] = A[2]!;
    A[7] = A[5]!;
  };
  const Ad = new Float64Array(9);
  const step = new Float64Array(3);
  for (let it = 0; it < 50 && Number.isFinite(c); it++) {
    normal(L, xr, xi);
    let moved = false;
    for (let tries = 0; tries < 20; tries++) {
      Ad.set(A);
      Ad[0]! *= 1 + lambda;
      Ad[4]! *= 1 + lambda;
      Ad[8]! *= 1 + lambda;
      if (!solve3(Ad, g, step)) {
        lambda *= 10;
        continue;
      }
      const nc = cost(p, L + step[0]!, xr + step[1]!, xi + step[2]!);
      if (nc <= c) {
        L += step[0]!;
        xr += step[1]!;
        xi += step[2]!;
        const gain = c - nc;
        c = nc;
        lambda = Math.max(lambda / 10, 1e-12);
        // converged: the step no longer changes x beyond 1e-12 of its size, nor the cost
        moved = Math.hypot(step[1]!, step[2]!) > 1e-12 * Math.hypot(xr, xi) && gain > 1e-14 * (c + 1e-300);
        break;
      }
      lambda *= 10;
    }
    if (!moved) break;
  }
  normal(L, xr, xi);
  const inv: number[] = [];
  const col = [0, 0, 0];
  for (let j = 0; j < 3; j++) {
    if (!solve3(A, [j === 0 ? 1 : 0, j === 1 ? 1 : 0, j === 2 ? 1 : 0], col)) return { L, x: { re: xr, im: xi }, ssr: c, inv: null };
    for (let i = 0; i < 3; i++) inv[i * 3 + j] = col[i]!;
  }
  return { L, x: { re: xr, im: xi }, ssr: c, inv };
}

/** Fit one element's readings: both roots, the kept one and why. */
/**
 * `noiseVar`: the reading-noise variance (dB²) the 1σ figures and the root decision use;
 * default the element's own residual, ssr/(n − 3) (revMethod passes one pooled over the
 * elements: with few codes the element's own has as few degrees of freedom, one for four codes).
 */
export function revFitElement(r: RevReadings, noiseVar?: number): RevResult {
  const n = r.delta.length;
  let lo = Infinity, hi = -Infinity;
  for (const p of r.powerDb) {
    lo = Math.min(lo, p);
    hi = Math.max(hi, p);
  }
  if (!(hi > lo)) return { ok: false, message: "the power does not vary with the code (no solution): the element may be dead or its phase shifter stuck" };
  const lin = revLinear(r);
  if (!lin) return { ok: false, message: "the codes' realized phases do not give three distinct points on the circle; expected code 0 and at least three codes whose phases differ" };
  const cf = revClosedForm(lin);
  if (!cf) return { ok: false, message: "the readings do not fit a field that rotates with the code (no solution)" };
  const ideal = r.rho.every((v) => v === 1);
  const L0 = 10 * Math.log10(cf.K);
  const a = refine(r, L0, cf.roots[0]);
  // ideal states: the second root predicts exactly the same powers (x' = conj(1 − x));
  // measured states break the symmetry a little, so that root is refined on its own
  const b: Refined = ideal ? { L: a.L, x: { re: 1 - a.x.re, im: a.x.im }, ssr: a.ssr, inv: null } : refine(r, L0, cf.roots[1]);
  const rootOf = (f: Refined): RevRoot => ({ x: f.x, referenceDb: f.L, residualDb: Math.sqrt(f.ssr / n) });
  const roots: [RevRoot, RevRoot] = [rootOf(a), rootOf(b)];
  const ma = Math.hypot(a.x.re, a.x.im), mb = Math.hypot(b.x.re, b.x.im);
  const kept: 0 | 1 = ma <= mb ? 0 : 1;
  const k = kept === 0 ? a : b;
  const mk = Math.min(ma, mb), mo = Math.max(ma, mb);
  // uncertainty of x along and across its direction, from s²·(JᵀJ)⁻¹ (s² = ssr/(n − 3))
  const inv = k.inv ?? a.inv;
  const s2 = noiseVar ?? (n > 3 ? k.ssr / (n - 3) : 0);
  let varRad = NaN, varTan = NaN;
  if (inv) {
    const ur = k.x.re / mk, ui = k.x.im / mk;
    // the mirrored root of an ideal fit, x' = (1 − Re x) + j·Im x: same variances, covariance negated
    const c11 = inv[4]!, c12 = k.inv ? inv[5]! : -inv[5]!, c22 = inv[8]!;
    varRad = s2 * (ur * ur * c11 + 2 * ur * ui * c12 + ui * ui * c22);
    varTan = s2 * (ui * ui * c11 - 2 * ur * ui * c12 + ur * ur * c22);
  }
  const sigmaAbs = Math.sqrt(Math.max(0, varRad));
  // the rule holds only when the kept field is smaller than the whole array's (|x| < 1) and the
  // two roots are told apart beyond the fit's uncertainty
  const separated = mo - mk > 3 * sigmaAbs && mo - mk > 1e-9;
  const far = mk < 1 && mo >= 2 * mk;
  const decided = separated && far;
  const why = decided
    ? `kept |e/E0| = ${mk.toPrecision(3)} over ${mo.toPrecision(3)}: an element's field is far smaller than the whole array's`
    : !separated
      ? `cannot be decided: the two roots give element fields of ${mk.toPrecision(3)} and ${mo.toPrecision(3)} of the array's, within the fit's uncertainty (${(3 * sigmaAbs).toPrecision(2)}, 3σ); kept the smaller`
      : `cannot be decided: the roots give element fields of ${mk.toPrecision(3)} and ${mo.toPrecision(3)} of the whole array's, not one far smaller than the other (the elements' fields largely cancel at the probe), so the smaller-field rule does not hold; kept the smaller`;
  // σ of one component of x (the larger of along and across: with no field both are the noise's)
  const sigmaComp = Math.max(sigmaAbs, Math.sqrt(Math.max(0, varTan)));
  const belowNoise = s2 > 0 && Number.isFinite(sigmaComp) && mk <= NOISE_FLOOR_SIGMAS * sigmaComp;
  return { ok: true, fit: { linear: lin, roots, kept, decided, why, relStd: sigmaAbs / mk, phaseStdRad: Math.sqrt(Math.max(0, varTan)) / mk, belowNoise } };
}

export interface RevElementData {
  index: number;
  id: number;
  /** enabled elements make up E0: their fields must add up to it */
  enabled: boolean;
  readings: RevReadings;
}

export interface RevElementResult {
  index: number;
  fit: RevFit;
}

/**
 * All elements of one frequency. Per element its field relative to the whole array's
 * (the common factor E0 is removed by referring), with flags and advice.
 * Returns the per-element errors instead when any element cannot be solved.
 */
export function revMethod(data: RevElementData[]): { ok: true; fields: MethodField[]; fits: RevElementResult[] } | { ok: false; errors: { index: number; message: string }[] } {
  const errors: { index: number; message: string }[] = [];
  const first: RevElementResult[] = [];
  for (const d of data) {
    const r = revFitElement(d.readings);
    if (!r.ok) errors.push({ index: d.index, message: r.message });
    else first.push({ index: d.index, fit: r.fit });
  }
  if (errors.length) return { ok: false, errors };
  const res = first.map((f) => f.fit.roots[f.fit.kept].residualDb).sort((a, b) => a - b);
  const medianRes = res.length ? res[Math.floor((res.length - 1) / 2)]! : 0;
  const poorBar = Math.max(4 * medianRes, 0.01);
  // The readings of one frequency share one noise level (one receiver, one range), so its
  // variance is pooled over the elements that fit: Σ ssr / Σ (n − 3). An element's own residual
  // has n − 3 degrees of freedom (one for four codes), so a 1σ from it alone can be far too small
  // (with four codes, a fifth of the elements erred by more than 3 of their own 1σ). A poor-fit
  // element keeps its own residual when that is larger.
  let ssrPool = 0, dofPool = 0;
  first.forEach((f) => {
    const root = f.fit.roots[f.fit.kept];
    const n = data.find((d) => d.index === f.index)!.readings.delta.length;
    if (root.residualDb > poorBar || n <= 3) return;
    ssrPool += root.residualDb * root.residualDb * n;
    dofPool += n - 3;
  });
  const pooled = dofPool > 0 ? ssrPool / dofPool : undefined;
  const byIndex = new Map(data.map((d) => [d.index, d]));
  const fits: RevElementResult[] = first.map((f) => {
    if (pooled === undefined) return f;
    const d = byIndex.get(f.index)!;
    const n = d.readings.delta.length;
    const root = f.fit.roots[f.fit.kept];
    const own = n > 3 ? (root.residualDb * root.residualDb * n) / (n - 3) : 0;
    const r = revFitElement(d.readings, root.residualDb > poorBar ? Math.max(own, pooled) : pooled);
    return r.ok ? { index: f.index, fit: r.fit } : f;
  });
  resolveBySum(fits, new Set(data.filter((d) => d.enabled).map((d) => d.index)));
  const ids = new Map(data.map((d) => [d.index, d.id]));
  const fields = fits.map(({ index, fit }): MethodField => {
    const root = fit.roots[fit.kept];
    const flags: Flag[] = [];
    const advice: string[] = [];
    const id = ids.get(index)!;
    if (root.residualDb > poorBar) {
      flags.push("poor-fit");
      advice.push(`element ${id}: rms fit residual ${root.residualDb.toFixed(3)} dB against a median of ${medianRes.toFixed(3)} dB: re-measure it, and check its phase shifter (a stuck or skipped bit)`);
    }
    if (fit.belowNoise) {
      const sig = Math.max(fit.relStd, fit.phaseStdRad) * Math.hypot(root.x.re, root.x.im);
      flags.push("dead");
      advice.push(
        `element ${id}: its fitted field, |e/E0| = ${Math.hypot(root.x.re, root.x.im).toPrecision(2)}, is within ${NOISE_FLOOR_SIGMAS}σ (σ = ${sig.toPrecision(2)}, from the fit) of zero, as often as 1 time in 90 from the reading noise alone: the readings cannot tell it from no field, so its phase and gain are not measured (the values written are the noise's). Check its connection and bias and re-measure it, or add ${id} to "array.disabled" in the scenario`,
      );
      return { index, field: root.x, residualDb: root.residualDb, relStd: fit.relStd, phaseStdRad: fit.phaseStdRad, unmeasured: true, flags, advice };
    }
    if (!fit.decided) {
      flags.push("ambiguous-root");
      advice.push(`element ${id}: ${fit.why}. Re-measure with the array phased up toward the probe (the previous calibration as the code-0 settings) so the whole array's field is large, or with more codes`);
    }
    return { index, field: root.x, residualDb: root.residualDb, relStd: fit.relStd, phaseStdRad: fit.phaseStdRad, flags, advice };
  });
  return { ok: true, fields, fits };
}

/**
 * The fields of the enabled elements add up to the whole array's: Σ x_n = 1 (derived:
 * E0 = Σ e_n). Swapping element n's root changes the sum by x' − x = 1 − 2·Re x (a real
 * shift). Every combination of root choices of the undecided elements (up to 16 of them)
 * is tried, and, when the kept roots miss the sum by more than 5σ of the fits, every
 * single swap of a decided one too. When exactly one combination lands within 5σ it is
 * applied, and the elements it covers are marked as decided by the sum; otherwise the
 * choices stay as they are (and stay flagged).
 */
/** The most undecided root choices the sum check tries together (2^16 combinations). */
export const SUM_CHECK_MAX_UNDECIDED = 16;

function resolveBySum(fits: RevElementResult[], enabled: Set<number>): void {
  const used = fits.filter((f) => enabled.has(f.index));
  if (used.length < 2) return;
  let sr = 0, si = 0, v = 0;
  for (const f of used) {
    const x = f.fit.roots[f.fit.kept].x;
    sr += x.re;
    si += x.im;
    const m2 = x.re * x.re + x.im * x.im;
    const a = Number.isFinite(f.fit.relStd) ? f.fit.relStd : 0, b = Number.isFinite(f.fit.phaseStdRad) ? f.fit.phaseStdRad : 0;
    v += m2 * (a * a + b * b);
  }
  const tol = Math.max(5 * Math.sqrt(v), 1e-9);
  const miss = (re: number) => Math.hypot(re - 1, si);
  const shift = (f: RevElementResult) => f.fit.roots[1 - f.fit.kept]!.x.re - f.fit.roots[f.fit.kept].x.re;
  const undecided = used.filter((f) => !f.fit.decided);
  if (undecided.length > SUM_CHECK_MAX_UNDECIDED) return;
  const solutions: RevElementResult[][] = [];
  for (let mask = 0; mask < 1 << undecided.length; mask++) {
    let re = sr;
    const set: RevElementResult[] = [];
    undecided.forEach((f, i) => {
      if (mask & (1 << i)) {
        re += shift(f);
        set.push(f);
      }
    });
    if (miss(re) <= tol) solutions.push(set);
  }
  if (miss(sr) > tol) for (const f of used) if (f.fit.decided && miss(sr + shift(f)) <= tol) solutions.push([f]);
  if (solutions.length !== 1) return;
  const swap = new Set(solutions[0]);
  for (const f of new Set([...undecided, ...swap])) {
    const fit = f.fit;
    if (swap.has(f)) fit.kept = (1 - fit.kept) as 0 | 1;
    const mk = Math.hypot(fit.roots[fit.kept].x.re, fit.roots[fit.kept].x.im);
    const mo = Math.hypot(fit.roots[1 - fit.kept]!.x.re, fit.roots[1 - fit.kept]!.x.im);
    fit.decided = true;
    fit.why = `kept |e/E0| = ${mk.toPrecision(3)} over ${mo.toPrecision(3)}: the only choice with which the enabled elements' fields add up to the whole array's (Σ e_n = E0, within 5σ of the fits)`;
  }
}
