/**
 * Measured phase-shifter and attenuator states (interface contract, "Measured state
 * tables"). Per element, the (p, q) pair whose realized weight
 *   10^((g + G_p(p) − A(q))/20) · exp(j(c + P(p) + Φ_a(q)))
 * is nearest in the complex plane to the target 10^(G_ref/20)·a·exp(jφ).
 *
 * Dividing both by the channel's own 10^(g/20)·e^{jc} leaves the distance order
 * unchanged, so each element searches points ρ·e^{jα} (ρ = 10^((G_p − A)/20),
 * α = P + Φ_a) for the one nearest R·e^{jθ}, R = 10^((G_ref − g)/20)·a, θ = ψ.
 *
 * The search is exact, not heuristic: attenuation codes are visited in order of the
 * lower bound |R − ρ| on their distance and dropped once that bound passes the best
 * distance; for each, phase states are scanned outward in angle from θ − Φ_a(q),
 * stopping once R·sin|Δ| (a lower bound on the distance for |Δ| < 90°, R beyond it)
 * passes the best. Ties go to the lower (q, p), the same rule as bruteForceNearest.
 */
import type { Plan, StateTable } from "../plan.js";
import type { BeamCodes, Quantizer } from "./contract.js";
import { commandedDeg, prepareFrequency, type FrequencyPrep } from "./prepare.js";

const TWO_PI = 2 * Math.PI;
const DEG = Math.PI / 180;

/** Per-element candidate model: the phase states and attenuator states that element can take. */
export interface ElementStates {
  /** Phase states: angle P(p) (rad), magnitude 10^(G_p/20). */
  pAng: Float64Array;
  pMag: Float64Array;
  /** Attenuator states: angle Φ_a(q) (rad), magnitude 10^(−A/20), and attenuation (dB). */
  qAng: Float64Array;
  qMag: Float64Array;
  qDb: Float64Array;
}

function read(t: StateTable | null, e: number, s: number, which: "primary" | "secondary"): number {
  if (!t) return NaN;
  const off = t.perElement ? e * t.states : 0;
  return t[which][off + s]!;
}

export function elementStates(plan: Plan, e: number): ElementStates {
  const np = 2 ** plan.phaseBits;
  const nq = 2 ** plan.attenBits;
  const ps = plan.phaseStates;
  const as = plan.attenStates;
  const pAng = new Float64Array(np);
  const pMag = new Float64Array(np);
  for (let p = 0; p < np; p++) {
    pAng[p] = (ps ? read(ps, e, p, "primary") : (p * 360) / np) * DEG;
    pMag[p] = ps ? Math.pow(10, read(ps, e, p, "secondary") / 20) : 1;
  }
  const qAng = new Float64Array(nq);
  const qMag = new Float64Array(nq);
  const qDb = new Float64Array(nq);
  for (let q = 0; q < nq; q++) {
    qDb[q] = as ? read(as, e, q, "primary") : q * plan.attenStepDb;
    qAng[q] = as ? read(as, e, q, "secondary") * DEG : 0;
    qMag[q] = Math.pow(10, -qDb[q]! / 20);
  }
  return { pAng, pMag, qAng, qMag, qDb };
}

/** Squared distance between R·e^{jθ} and ρ·e^{jα}. Both searches use exactly this expression. */
function dist2(R: number, theta: number, rho: number, alpha: number): number {
  return R * R + rho * rho - 2 * R * rho * Math.cos(theta - alpha);
}

/** Reference: try every (q, p) pair. Ties go to the lower q, then the lower p. */
export function bruteForceNearest(s: ElementStates, R: number, theta: number): { p: number; q: number; d2: number } {
  let best = Infinity;
  let bp = 0;
  let bq = 0;
  for (let q = 0; q < s.qMag.length; q++) {
    for (let p = 0; p < s.pMag.length; p++) {
      const d = dist2(R, theta, s.qMag[q]! * s.pMag[p]!, s.pAng[p]! + s.qAng[q]!);
      if (d < best) {
        best = d;
        bp = p;
        bq = q;
      }
    }
  }
  return { p: bp, q: bq, d2: best };
}

/** Pre-sorted search structure of one element for a fixed target radius R. */
export class NearestStateSearch {
  private readonly order: Int32Array; // phase codes sorted by wrapped angle
  private readonly sortedAng: Float64Array;
  private readonly qOrder: Int32Array;
  private readonly qBound2: Float64Array; // lower bound on d² per q, in qOrder
  constructor(
    private readonly s: ElementStates,
    private readonly R: number,
  ) {
    const np = s.pAng.length;
    const wrapped = Array.from(s.pAng, (a) => a - TWO_PI * Math.floor(a / TWO_PI));
    this.order = Int32Array.from(Array.from({ length: np }, (_, i) => i).sort((a, b) => wrapped[a]! - wrapped[b]! || a - b));
    this.sortedAng = Float64Array.from(this.order, (p) => wrapped[p]!);
    let mx = 0;
    let mn = Infinity;
    for (const m of s.pMag) {
      mx = Math.max(mx, m);
      mn = Math.min(mn, m);
    }
    const nq = s.qMag.length;
    const bound = new Float64Array(nq);
    for (let q = 0; q < nq; q++) {
      const hi = s.qMag[q]! * mx;
      const lo = s.qMag[q]! * mn;
      const b = R > hi ? R - hi : R < lo ? lo - R : 0;
      bound[q] = b * b;
    }
    this.qOrder = Int32Array.from(Array.from({ length: nq }, (_, i) => i).sort((a, b) => bound[a]! - bound[b]! || a - b));
    this.qBound2 = Float64Array.from(this.qOrder, (q) => bound[q]!);
  }

  nearest(theta: number): { p: number; q: number; d2: number } {
    const { s, R, order, sortedAng } = this;
    const np = order.length;
    let best = Infinity;
    let bp = 0;
    let bq = 0;
    const consider = (p: number, q: number): number => {
      const d = dist2(R, theta, s.qMag[q]! * s.pMag[p]!, s.pAng[p]! + s.qAng[q]!);
      if (d < best || (d === best && (q < bq || (q === bq && p < bp)))) {
        best = d;
        bp = p;
        bq = q;
      }
      return d;
    };
    for (let k = 0; k < this.qOrder.length; k++) {
      if (this.qBound2[k]! > best) break;
      const q = this.qOrder[k]!;
      let target = theta - s.qAng[q]!;
      target -= TWO_PI * Math.floor(target / TWO_PI);
      // first sorted index with angle ≥ target
      let lo = 0;
      let hi = np;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (sortedAng[mid]! < target) lo = mid + 1;
        else hi = mid;
      }
      // scan forward (increasing angle) and backward, wrapping, at most np steps in all
      let fwd = lo;
      let back = lo - 1;
      let steps = 0;
      let fwdOpen = true;
      let backOpen = true;
      while ((fwdOpen || backOpen) && steps < np) {
        if (fwdOpen) {
          const idx = ((fwd % np) + np) % np;
          let delta = sortedAng[idx]! + TWO_PI * Math.floor((fwd - idx) / np) - target;
          if (delta < 0) delta += TWO_PI;
          if (lowerBound2(R, delta) > best) fwdOpen = false;
          else {
            consider(order[idx]!, q);
            fwd++;
            steps++;
          }
        }
        if (backOpen && steps < np) {
          const idx = ((back % np) + np) % np;
          let delta = target - sortedAng[idx]!;
          if (delta < 0) delta += TWO_PI;
          if (lowerBound2(R, delta) > best) backOpen = false;
          else {
            consider(order[idx]!, q);
            back--;
            steps++;
          }
        }
      }
    }
    return { p: bp, q: bq, d2: best };
  }
}

/** Lower bound on d² for a point at angular distance delta (0 … 2π) from the target. */
function lowerBound2(R: number, delta: number): number {
  const d = delta > Math.PI ? TWO_PI - delta : delta;
  if (d >= Math.PI / 2) return R * R;
  const b = R * Math.sin(d);
  return b * b * (1 - 1e-12); // a hair under, so float rounding never prunes a true minimum
}

export function measuredStatesQuantizer(plan: Plan, fi: number, prep: FrequencyPrep = prepareFrequency(plan, fi)): Quantizer {
  if (plan.quantizer.method === "randomized")
    throw new Error("randomized quantizer with measured states is rejected at load time");
  const n = plan.elements.count;
  const { X, Y, Z, C, states, lsbDeg, gRefDb } = prep;
  const searches: NearestStateSearch[] = [];
  let clipped = 0;
  const maxAtten = new Float64Array(n);
  for (let e = 0; e < n; e++) {
    const s = elementStates(plan, e);
    const R = Math.pow(10, (gRefDb - plan.cals[fi]!.gainDb[e]!) / 20) * plan.amplitude[e]!;
    searches.push(new NearestStateSearch(s, R));
    let mx = 0;
    for (const a of s.qDb) mx = Math.max(mx, a);
    maxAtten[e] = mx;
    if (plan.elements.enabled[e] && prep.attenDb[e]! > mx) clipped++;
  }
  const beams = plan.beams;
  return {
    method: "nearest-states",
    beam(b: number, out: BeamCodes): void {
      const u = beams.u[b]!;
      const v = beams.v[b]!;
      const w = beams.w[b]!;
      for (let i = 0; i < n; i++) {
        const t = X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!;
        const psiDeg = commandedDeg(t, states, lsbDeg);
        out.phaseDeg[i] = psiDeg;
        const r = searches[i]!.nearest(psiDeg * DEG);
        out.phaseCode[i] = r.p;
        out.attenCode[i] = r.q;
      }
      out.attenDb.set(prep.attenDb);
      out.clipped = clipped;
    },
  };
}
