/**
 * Band analysis (interface contract, Version 2, "Element pattern and band analysis"):
 * a table built for one frequency, played at another. Phase shifters are not true
 * time delay, so the phases that point the beam at d̂ at f0 point it elsewhere at f:
 * for a phase-steered planar array the peak moves to (u, v) = (u0, v0)·f0/f exactly
 * (before quantisation and the element pattern). squint.csv holds, per (table
 * frequency, beam, band frequency), the realized peak, its angle from the commanded
 * direction and the gain loss at the commanded direction, found by the same per-beam
 * machinery as beams.csv (BeamAnalyzer at the band frequency, fed the table's codes).
 */
import type { BeamCodes } from "./quantize/contract.js";
import { BeamAnalyzer } from "./pattern/analyze.js";
import { AfEvaluator } from "./pattern/evaluator.js";
import type { Calibration, Plan } from "./plan.js";
import { planCalibrationAt } from "./calibrate/per-frequency.js";
import { SPEED_OF_LIGHT } from "./units.js";

/** Most band points one scenario may ask for. */
export const MAX_BAND_POINTS = 64;
/** Most rows squint.csv may hold (table frequencies × beams × band points). */
export const MAX_SQUINT_ROWS = 1 << 22;

export const SQUINT_COLUMNS = ["table_frequency_hz", "beam", "frequency_hz", "peak_u", "peak_v", "pointing_error_deg", "gain_loss_db"] as const;
/** Numbers kept per (table frequency, beam, band frequency): peak_u, peak_v, pointing_error_deg, gain_loss_db. */
export const SQUINT_METRICS = 4;

/**
 * The calibration offsets (c_n, g_n) that hold at frequency fHz: the one place the band
 * analysis takes them from. Without a frequency_hz column in cal.csv one set serves every
 * frequency (interface contract, "Calibration per frequency"); with it, the set listed at
 * fHz or the one interpolated between the two listed around it, by the same function the
 * loader serves the table frequencies with (planCalibrationAt → calibrationAt on the
 * table). Pass the exact decimal text when there is one. A frequency outside the listed
 * span throws: the loader refuses such a band (`/band`) before any analysis.
 */
export function calibrationAt(plan: Plan, fHz: number | string): Calibration {
  const r = planCalibrationAt(plan, fHz);
  if (!r.ok) throw new Error(`band analysis: no calibration at ${String(fHz)} Hz: ${r.message}`);
  return r.cal;
}

/** The plan as seen at one frequency (its only table frequency), with that frequency's calibration. */
export function planAtFrequency(plan: Plan, fHz: number, exact: string): Plan {
  return { ...plan, frequenciesHz: [fHz], frequenciesExact: [exact], cals: [calibrationAt(plan, exact)], calServed: null };
}

/** Per table frequency: one analyzer per band frequency (built on first use), fed the table's codes. */
export class BandAnalyzer {
  private readonly at: (BeamAnalyzer | null)[];
  constructor(private readonly plan: Plan) {
    this.at = new Array<BeamAnalyzer | null>(plan.band?.frequenciesHz.length ?? 0).fill(null);
  }
  get points(): number {
    return this.at.length;
  }
  /** Beam b with the codes of its table: writes points × SQUINT_METRICS numbers into out[off …]. */
  analyse(b: number, codes: BeamCodes, out: Float64Array, off: number): void {
    const band = this.plan.band!;
    for (let k = 0; k < this.at.length; k++) {
      let a = this.at[k];
      if (!a) a = this.at[k] = new BeamAnalyzer(planAtFrequency(this.plan, band.frequenciesHz[k]!, band.frequenciesExact[k]!), 0);
      a.analysePeak(b, codes, out, off + k * SQUINT_METRICS);
    }
  }
}

/** Worst values are null when no band point has one (never expected; kept JSON-safe). */
export interface BandBeamSummary {
  tableFrequencyHz: number;
  beam: number;
  worstPointingDeg: number | null;
  worstPointingAtHz: number | null;
  worstGainLossDb: number | null;
  worstGainLossAtHz: number | null;
}

/** Per (table frequency, beam): the worst pointing error and the worst gain loss across the band. */
export function bandSummary(plan: Plan, squint: Float64Array): BandBeamSummary[] {
  const band = plan.band!;
  const nk = band.frequenciesHz.length;
  const nb = plan.beams.count;
  const out: BandBeamSummary[] = [];
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++)
    for (let b = 0; b < nb; b++) {
      let wp = -Infinity, wpk = -1, wg = -Infinity, wgk = -1;
      for (let k = 0; k < nk; k++) {
        const o = ((fi * nb + b) * nk + k) * SQUINT_METRICS;
        const pe = squint[o + 2]!, gl = squint[o + 3]!;
        if (pe > wp) { wp = pe; wpk = k; }
        if (gl > wg) { wg = gl; wgk = k; }
      }
      const ok = (x: number) => (Number.isFinite(x) ? x : null);
      out.push({ tableFrequencyHz: plan.frequenciesHz[fi]!, beam: b, worstPointingDeg: ok(wp), worstPointingAtHz: wpk < 0 ? null : band.frequenciesHz[wpk]!, worstGainLossDb: ok(wg), worstGainLossAtHz: wgk < 0 ? null : band.frequenciesHz[wgk]! });
    }
  return out;
}

export interface SquintBandwidth {
  /** The beam of the grid scanned farthest from broadside, its θ and φ (deg). */
  beam: number;
  thetaDeg: number;
  phiDeg: number;
  /** Half-power (−3 dB) beamwidth of the ideal tapered pattern in the scan plane, deg. */
  beamwidthDeg: number;
  /** Band edges at which a phase-steered beam squints by half that beamwidth (Hz; high is null when θ0 ≤ half the beamwidth: no upper limit). */
  lowHz: number;
  highHz: number | null;
  /** highHz − lowHz: the instantaneous bandwidth for a squint of half the beamwidth (null: no upper limit). */
  bandwidthHz: number | null;
  /** First-order estimate 2·f0·(θ3/2)/tanθ0 (rad), for comparison. */
  firstOrderHz: number;
  /** Aperture fill time: the spread of r_n·d̂ over the enabled elements, divided by c (s). */
  fillTimeS: number;
}

/**
 * The instantaneous bandwidth of table frequency fi at the grid's widest scan: the
 * band over which a phase-steered beam (sin θ(f) = sin θ0·f0/f, derived from
 * φ_n = −k0·r_n·d̂) stays within half its 3-dB beamwidth of the commanded direction.
 * The beamwidth is measured on the ideal tapered array factor (exact evaluator) in
 * the plane through boresight and d̂. null when the grid has no scanned beam.
 */
export function squintBandwidth(plan: Plan, fi: number): SquintBandwidth | null {
  const { u, v, count } = plan.beams;
  let beam = -1, best = 0;
  for (let b = 0; b < count; b++) {
    const s = Math.hypot(u[b]!, v[b]!);
    if (s > best + 1e-15) { best = s; beam = b; }
  }
  if (beam < 0 || best < 1e-9) return null;
  const f0 = plan.frequenciesHz[fi]!;
  const k = (2 * Math.PI * f0) / SPEED_OF_LIGHT;
  const el = plan.elements;
  const ev = new AfEvaluator(el.x, el.y, el.z, k);
  for (let i = 0; i < el.count; i++) {
    ev.wr[i] = el.enabled[i] ? plan.amplitude[i]! : 0;
    ev.wi[i] = 0;
  }
  const u0 = u[beam]!, v0 = v[beam]!;
  const w0 = Math.sqrt(Math.max(0, 1 - best * best));
  ev.setBeam(u0, v0, w0);
  const theta0 = Math.asin(Math.min(1, best));
  const phi0 = Math.atan2(v0, u0);
  const c = Math.cos(phi0), s = Math.sin(phi0);
  const at = (theta: number) => ev.power(Math.sin(theta) * c - u0, Math.sin(theta) * s - v0);
  const p0 = at(theta0);
  // aperture extent along the scan direction sets the search step
  let lo = Infinity, hi = -Infinity, dlo = Infinity, dhi = -Infinity;
  for (let i = 0; i < el.count; i++) {
    if (!el.enabled[i]) continue;
    const t = el.x[i]! * c + el.y[i]! * s;
    lo = Math.min(lo, t);
    hi = Math.max(hi, t);
    const d = el.x[i]! * u0 + el.y[i]! * v0 + el.z[i]! * w0;
    dlo = Math.min(dlo, d);
    dhi = Math.max(dhi, d);
  }
  const lambda = SPEED_OF_LIGHT / f0;
  const step = (0.02 * lambda) / Math.max(hi - lo + lambda / 2, lambda / 2);
  const halfPoint = (dir: 1 | -1): number => {
    let a = 0, bnd = step;
    while (at(theta0 + dir * bnd) > p0 / 2) {
      a = bnd;
      bnd += step;
      if (theta0 + dir * bnd > Math.PI / 2 || bnd > Math.PI) return dir > 0 ? Math.PI / 2 - theta0 : bnd;
    }
    for (let it = 0; it < 60; it++) {
      const m = (a + bnd) / 2;
      // a and bnd adjacent doubles: further halvings keep returning m (same result, fewer evaluations)
      if (m === a || m === bnd) break;
      if (at(theta0 + dir * m) > p0 / 2) a = m;
      else bnd = m;
    }
    return (a + bnd) / 2;
  };
  const bw = halfPoint(1) + halfPoint(-1);
  const half = bw / 2;
  const sin0 = Math.sin(theta0);
  const lowHz = (f0 * sin0) / Math.sin(Math.min(Math.PI / 2, theta0 + half));
  const highHz = theta0 > half ? (f0 * sin0) / Math.sin(theta0 - half) : null;
  return {
    beam,
    thetaDeg: (theta0 * 180) / Math.PI,
    phiDeg: (phi0 * 180) / Math.PI,
    beamwidthDeg: (bw * 180) / Math.PI,
    lowHz,
    highHz,
    bandwidthHz: highHz === null ? null : highHz - lowHz,
    firstOrderHz: (2 * f0 * half) / Math.tan(theta0),
    fillTimeS: (dhi - dlo) / SPEED_OF_LIGHT,
  };
}
