/**
 * Calibration from range measurements (interface contract, Version 2, "steercode
 * calibrate"): the shared part of every method.
 *
 * A method turns its readings into each channel's complex field at the probe, e_n, up
 * to one factor common to all channels. What is left is the same for every method:
 *   e_n = w_n · s0_n · h_n
 * with w_n = 10^(g_n/20)·e^{jc_n} the channel's own weight at codes 0/0 (the offsets we
 * want), s0_n the realized factor of phase code 0 and attenuation code 0 (1 for ideal
 * parts; the measured state tables otherwise), and h_n the path to the probe:
 *   far field, direction d̂:  h_n = exp(+jk·r_n·d̂)        (as in AF)
 *   near field, point p:     h_n = exp(−jk·|p − r_n|)/|p − r_n|
 * Then w_n = e_n / (s0_n·h_n), and the offsets are referred so that over the enabled
 * elements the circular mean of c_n is 0° and the mean of g_n is 0 dB.
 */
import type { Elements } from "../geometry.js";

export type Probe = { kind: "far"; azDeg: number; elDeg: number } | { kind: "near"; x: number; y: number; z: number };

export interface Complex {
  re: number;
  im: number;
}

const DEG = Math.PI / 180;

/** Unit vector of an az/el direction (interface contract: u = cos el·sin az, v = sin el, w = cos el·cos az). */
export function azElToUvw(azDeg: number, elDeg: number): [number, number, number] {
  const a = azDeg * DEG, e = elDeg * DEG;
  return [Math.cos(e) * Math.sin(a), Math.sin(e), Math.cos(e) * Math.cos(a)];
}

/** h_n: the path from element n (position x, y, z in m) to the probe at wavenumber k (rad/m). */
export function pathFactor(probe: Probe, x: number, y: number, z: number, k: number): Complex {
  if (probe.kind === "far") {
    const [u, v, w] = azElToUvw(probe.azDeg, probe.elDeg);
    const ph = k * (x * u + y * v + z * w);
    return { re: Math.cos(ph), im: Math.sin(ph) };
  }
  const r = Math.hypot(probe.x - x, probe.y - y, probe.z - z);
  const ph = -k * r;
  return { re: Math.cos(ph) / r, im: Math.sin(ph) / r };
}

/** The element nearest the probe point (its index, −1 for a far-field probe or no element) and its distance (m); a near-field probe must not sit on one. */
export function probeNearest(probe: Probe, el: Elements): { index: number; distanceM: number } {
  let index = -1, distanceM = Infinity;
  if (probe.kind === "far") return { index, distanceM };
  for (let i = 0; i < el.count; i++) {
    const d = Math.hypot(probe.x - el.x[i]!, probe.y - el.y[i]!, probe.z - el.z[i]!);
    if (d < distanceM) { distanceM = d; index = i; }
  }
  return { index, distanceM };
}

export type Flag = "dead" | "poor-fit" | "ambiguous-root";

export interface ElementOffsets {
  /** element id */
  element: number;
  enabled: boolean;
  /** referred offsets: c_n (deg, (−180, 180]) and g_n (dB) */
  phaseDeg: number;
  gainDb: number;
  /** the channel's raw field before referring (relative units), for reports */
  fieldDb: number;
  /** rms fit residual (dB); null for methods without a fit (field) */
  residualDb: number | null;
  /** one-sigma uncertainty from the fit (deg, dB); null without a fit */
  phaseStdDeg: number | null;
  gainStdDb: number | null;
  flags: Flag[];
  advice: string[];
}

/** What a method hands on: per element of the data, the complex field at the probe (common factor arbitrary). */
export interface MethodField {
  /** index into Elements */
  index: number;
  field: Complex;
  residualDb: number | null;
  /** relative one-sigma uncertainty of |field| and of its phase (rad); null without a fit */
  relStd: number | null;
  phaseStdRad: number | null;
  /** true when the field is not told from the reading noise: no uncertainty is reported (the linearised one does not hold) */
  unmeasured?: boolean;
  flags: Flag[];
  advice: string[];
}

export interface ReferOptions {
  elements: Elements;
  probe: Probe;
  /** wavenumber (rad/m) */
  k: number;
  /** realized factor of codes 0/0 per element index (1 for ideal parts) */
  codeZero: (index: number) => Complex;
  /** a channel this far below the median (dB) is flagged dead */
  deadBelowDb?: number;
}

export interface Referred {
  offsets: ElementOffsets[];
  /** the common phase (deg) and gain (dB) that were removed */
  commonPhaseDeg: number;
  commonGainDb: number;
  enabledUsed: number;
}

export function wrap180(deg: number): number {
  let x = deg - 360 * Math.floor((deg + 180) / 360);
  if (x <= -180) x += 360;
  return x;
}

function cdiv(a: Complex, b: Complex): Complex {
  const d = b.re * b.re + b.im * b.im;
  return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
}

/** Remove the code-0 state and the probe path, flag dead channels, refer to circular mean 0° and mean 0 dB. */
export function referOffsets(fields: MethodField[], o: ReferOptions): Referred {
  const el = o.elements;
  const raw = fields.map((f) => {
    const h = pathFactor(o.probe, el.x[f.index]!, el.y[f.index]!, el.z[f.index]!, o.k);
    const s0 = o.codeZero(f.index);
    const w = cdiv(cdiv(f.field, h), s0);
    return { f, phaseDeg: Math.atan2(w.im, w.re) / DEG, gainDb: 10 * Math.log10(w.re * w.re + w.im * w.im), fieldDb: 10 * Math.log10(f.field.re * f.field.re + f.field.im * f.field.im) };
  });
  // dead channels: far below the median channel gain
  const sorted = raw.map((r) => r.gainDb).sort((a, b) => a - b);
  const median = sorted.length ? (sorted.length % 2 ? sorted[(sorted.length - 1) / 2]! : (sorted[sorted.length / 2 - 1]! + sorted[sorted.length / 2]!) / 2) : 0;
  const deadBelow = o.deadBelowDb ?? 10;
  let sr = 0, si = 0, sg = 0, n = 0;
  for (const r of raw) {
    if (!el.enabled[r.f.index]) continue;
    sr += Math.cos(r.phaseDeg * DEG);
    si += Math.sin(r.phaseDeg * DEG);
    sg += r.gainDb;
    n++;
  }
  const commonPhaseDeg = n && Math.hypot(sr, si) > 1e-12 * n ? Math.atan2(si, sr) / DEG : 0;
  const commonGainDb = n ? sg / n : 0;
  const offsets = raw.map((r): ElementOffsets => {
    const flags = [...r.f.flags];
    const advice = [...r.f.advice];
    const id = el.ids[r.f.index]!;
    if (r.gainDb < median - deadBelow && !flags.includes("dead")) {
      flags.unshift("dead");
      advice.unshift(`element ${id} is ${(median - r.gainDb).toFixed(1)} dB below the median channel: check its connection and bias, re-measure it, or add ${id} to "array.disabled" in the scenario`);
    }
    return {
      element: id,
      enabled: !!el.enabled[r.f.index],
      phaseDeg: wrap180(r.phaseDeg - commonPhaseDeg),
      gainDb: r.gainDb - commonGainDb,
      fieldDb: r.fieldDb,
      residualDb: r.f.residualDb,
      phaseStdDeg: r.f.unmeasured || r.f.phaseStdRad === null || !Number.isFinite(r.f.phaseStdRad) ? null : r.f.phaseStdRad / DEG,
      gainStdDb: r.f.unmeasured || r.f.relStd === null || !Number.isFinite(r.f.relStd) ? null : (20 / Math.LN10) * r.f.relStd,
      flags,
      advice,
    };
  });
  return { offsets, commonPhaseDeg, commonGainDb, enabledUsed: n };
}
