/**
 * Per-frequency set-up shared by the quantizers: element phase slopes in LSB units,
 * G_ref and the commanded attenuation (interface contract, "Commanded phase" and
 * "Commanded attenuation").
 */
import { exactBeamDirection } from "../beams.js";
import { D, type Dec, nearHalf, roundHalfUp } from "../exact.js";
import { latticeExactPosition, type ExactDirection } from "../geometry.js";
import type { Plan } from "../plan.js";
import { C_EXACT, SPEED_OF_LIGHT } from "../units.js";

export interface FrequencyPrep {
  frequencyIndex: number;
  lambdaM: number;
  /** 2^B */
  states: number;
  lsbDeg: number;
  /** t_n(d̂) = X_n·u + Y_n·v + Z_n·w + C_n = (φ_n − c_n)/LSB, in LSB units, unwrapped. */
  X: Float64Array;
  Y: Float64Array;
  Z: Float64Array;
  C: Float64Array;
  hasZ: boolean;
  /** G_ref, dB, and the element that sets it (-1 when no element is enabled). */
  gRefDb: number;
  gRefElement: number;
  /** A_n (dB) and its code q_n after clipping (ideal attenuator). */
  attenDb: Float64Array;
  attenCode: Int32Array;
  clippedMask: Uint8Array;
  clipped: number;
}

export function prepareFrequency(plan: Plan, fi: number): FrequencyPrep {
  const el = plan.elements;
  const n = el.count;
  const f = plan.frequenciesHz[fi]!;
  const lambdaM = SPEED_OF_LIGHT / f;
  const states = 2 ** plan.phaseBits;
  const lsbDeg = 360 / states;
  const X = new Float64Array(n);
  const Y = new Float64Array(n);
  const Z = new Float64Array(n);
  const C = new Float64Array(n);
  const cal = plan.cals[fi]!;
  const s = -states / lambdaM; // φ/LSB = −(r·d̂)/λ · 2^B
  let hasZ = false;
  for (let i = 0; i < n; i++) {
    X[i] = el.x[i]! * s;
    Y[i] = el.y[i]! * s;
    Z[i] = el.z[i]! * s;
    if (el.z[i] !== 0) hasZ = true;
    C[i] = -cal.phaseDeg[i]! / lsbDeg;
  }
  // G_ref = min over enabled elements of g_n − 20·log10(a_n)
  let gRefDb = Infinity;
  let gRefElement = -1;
  for (let i = 0; i < n; i++) {
    if (!el.enabled[i]) continue;
    const g = cal.gainDb[i]! - 20 * Math.log10(plan.amplitude[i]!);
    if (g < gRefDb) {
      gRefDb = g;
      gRefElement = i;
    }
  }
  if (gRefElement < 0) gRefDb = 0;
  const attenDb = new Float64Array(n);
  const attenCode = new Int32Array(n);
  const clippedMask = new Uint8Array(n);
  const maxCode = 2 ** plan.attenBits - 1;
  let clipped = 0;
  for (let i = 0; i < n; i++) {
    const a = cal.gainDb[i]! - gRefDb - 20 * Math.log10(plan.amplitude[i]!);
    attenDb[i] = a;
    const t = a / plan.attenStepDb;
    let q = Math.floor(t + 0.5);
    if (nearHalf(t) && gRefElement >= 0) q = exactAttenCode(plan, fi, i, gRefElement);
    if (q < 0) q = 0;
    if (q > maxCode) {
      q = maxCode;
      if (el.enabled[i]) {
        clippedMask[i] = 1;
        clipped++;
      }
    }
    attenCode[i] = q;
  }
  return { frequencyIndex: fi, lambdaM, states, lsbDeg, X, Y, Z, C, hasZ, gRefDb, gRefElement, attenDb, attenCode, clippedMask, clipped };
}

/**
 * Exact attenuation code of element i: A = (g_i − g_m) − 20·(log10 a_i − log10 a_m),
 * m the element that sets G_ref, decided in decimal with ties going up. Taper
 * amplitudes enter as their float64 values (uniform tapers are exactly 1).
 */
export function exactAttenCode(plan: Plan, fi: number, i: number, m: number): number {
  const cal = plan.cals[fi]!;
  const a = new D(cal.gainExact[i]!)
    .minus(cal.gainExact[m]!)
    .minus(new D(20).times(D.log10(new D(plan.amplitude[i]!)).minus(D.log10(new D(plan.amplitude[m]!)))));
  return roundHalfUp(a.div(plan.attenStepExact)).toNumber();
}

/** Exact t = (φ_n − c_n)/LSB for element i and an exact beam direction. */
export function exactPhaseT(plan: Plan, fi: number, i: number, d: ExactDirection): Dec {
  const el = plan.elements;
  const states = new D(2).pow(plan.phaseBits);
  let x: Dec, y: Dec, z: Dec;
  if (el.exactX && el.exactY && el.exactZ) {
    x = new D(el.exactX[i]!);
    y = new D(el.exactY[i]!);
    z = new D(el.exactZ[i]!);
  } else if (plan.lattice) {
    [x, y] = latticeExactPosition(plan.lattice, i);
    z = new D(0);
  } else throw new Error("element without an exact position");
  const dot = x.times(d.u).plus(y.times(d.v)).plus(z.times(d.w));
  const phi = dot.times(plan.frequenciesExact[fi]!).div(C_EXACT).times(states).neg();
  return phi.minus(new D(plan.cals[fi]!.phaseExact[i]!).times(states).div(360));
}

/** Caches the exact direction of the current beam (computed only when a boundary case needs it). */
export class ExactDirectionCache {
  private beam = -1;
  private dir: ExactDirection | null = null;
  constructor(private readonly plan: Plan) {}
  get(beam: number): ExactDirection {
    if (beam !== this.beam || !this.dir) {
      this.dir = exactBeamDirection(this.plan.beams.spec, beam);
      this.beam = beam;
    }
    return this.dir;
  }
}

/** Exact nearest phase code, ties to the higher code, mod 2^B. */
export function exactPhaseCode(plan: Plan, fi: number, i: number, d: ExactDirection): number {
  const t = exactPhaseT(plan, fi, i, d);
  const p = roundHalfUp(t).toNumber();
  const states = 2 ** plan.phaseBits;
  return ((p % states) + states) % states;
}

/** ψ in degrees, [0, 360), from t = (φ − c)/LSB (unwrapped, in LSB units). */
export function commandedDeg(t: number, states: number, lsbDeg: number): number {
  const wrapped = t - states * Math.floor(t / states);
  return (wrapped >= states ? 0 : wrapped) * lsbDeg;
}
