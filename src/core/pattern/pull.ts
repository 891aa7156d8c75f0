/**
 * Beams the element pattern pulls out of the array's own main lobe (README "Element
 * pattern", "Pulled beams").
 *
 * The total pattern is |AF|²·E. A steep E (cos^q θ with a large q, or a table pattern)
 * tilts it towards E's maximum, so its peak can leave the array factor's main lobe. We call
 * a beam *pulled* when, at the total pattern's peak, the ideal array factor (taper, exact
 * phases, isotropic elements) is more than 3 dB below its value at the commanded direction
 * d̂ (where it is largest): the peak lies outside the array's half-power main lobe, i.e.
 * more than half the 3-dB beamwidth from d̂ in the direction it moved. This needs no
 * beamwidth formula and holds for any geometry. For such a beam pointing_error_deg is the
 * element pattern's pull, and psl_db compares sidelobes with that pulled peak (near 0 dB or
 * positive when the array's own lobe at d̂ is what remains), so neither says anything about
 * quantisation.
 */
import { angleBetweenDeg, uvToW } from "../geometry.js";
import { LineCutPattern, makeElementPattern } from "../element.js";
import type { Plan } from "../plan.js";
import { SPEED_OF_LIGHT } from "../units.js";
import { AfEvaluator } from "./evaluator.js";
import { gridShape } from "./grid.js";
import { peakOnDemand } from "./lobes.js";

/** |AF|² at the peak this far below its value at d̂ (half power) makes a beam pulled. */
export const PULL_DROP_DB = 10 * Math.log10(2);

export interface BeamPull {
  fi: number;
  beam: number;
  peakU: number;
  peakV: number;
  /** angle from the commanded direction to the peak */
  pointingDeg: number;
  /** how far the ideal array factor at the peak is below its value at d̂, dB (> PULL_DROP_DB) */
  afDropDb: number;
}

/** An evaluator of the ideal weights of frequency fi (de-steered: taper amplitudes, zero phase), with the element pattern. */
function idealEvaluator(plan: Plan, fi: number): AfEvaluator {
  const el = plan.elements;
  const k = (2 * Math.PI * plan.frequenciesHz[fi]!) / SPEED_OF_LIGHT;
  const ev = new AfEvaluator(el.x, el.y, el.z, k);
  for (let i = 0; i < el.count; i++) {
    ev.wr[i] = el.enabled[i] ? plan.amplitude[i]! : 0;
    ev.wi[i] = 0;
  }
  const e = plan.element ? makeElementPattern(plan.element) : null;
  // a line array: the pattern on the cut through the commanded direction, as its analysis uses it (LineCutPattern)
  ev.element = e && ev.lockU !== ev.lockV ? new LineCutPattern(e, ev.lockV) : e;
  return ev;
}

/** −10·log10(|AF(peak)|²/|AF(d̂)|²) of the ideal weights; the evaluator's beam must be set. */
function afDrop(ev: AfEvaluator, du: number, dv: number): number {
  // field() returns the evaluator's own scratch pair: read each value before the next call
  const p = ev.field(du, dv);
  const a = p[0] * p[0] + p[1] * p[1];
  const p0 = ev.field(0, 0);
  const a0 = p0[0] * p0[0] + p0[1] * p0[1];
  return a0 > 0 ? -10 * Math.log10(a / a0 + 1e-300) : 0;
}

/**
 * The pulled beams, judged at the realized peaks of a metrics block ([frequency][beam] rows
 * of `stride` values, peak_u and peak_v at offsets `iu`, `iv`): what build and report print.
 * Empty without an element pattern (isotropic elements cannot pull a beam).
 */
export function pulledAtPeaks(plan: Plan, metrics: Float64Array, stride: number, iu: number, iv: number): BeamPull[] {
  const out: BeamPull[] = [];
  if (!plan.element) return out;
  const nb = plan.beams.count;
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    let ev: AfEvaluator | null = null;
    for (let b = 0; b < nb; b++) {
      const o = (fi * nb + b) * stride;
      const pu = metrics[o + iu]!, pv = metrics[o + iv]!;
      if (!Number.isFinite(pu) || !Number.isFinite(pv)) continue;
      const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!, w0 = plan.beams.w[b]!;
      ev ??= idealEvaluator(plan, fi);
      ev.setBeam(u0, v0, w0);
      const drop = afDrop(ev, pu - u0, pv - v0);
      if (drop > PULL_DROP_DB) out.push({ fi, beam: b, peakU: pu, peakV: pv, pointingDeg: angleBetweenDeg({ u: u0, v: v0, w: w0 }, { u: pu, v: pv, w: uvToW(pu, pv) }), afDropDb: drop });
    }
  }
  return out;
}

/**
 * What check may spend on predicting pulls: beams that leave their own cell cost a climb
 * and an exact refinement (a few dozen evaluations of every element), and a non-planar
 * array's beams every evaluation (its array factor changes with the beam). Past this many
 * element evaluations (~2 s on the CI machine) the rest of the beams is left to build,
 * which judges every realized peak, and the warning says how many were examined.
 */
export const PREDICT_ELEMENT_EVALUATIONS = 1e9;
/**
 * Evaluations counted for one climb and refinement (the exact climb of lobes.ts nearestPeak,
 * one evaluation a quarter cell, is counted as it goes), and what one evaluation costs beyond
 * its elements, in element terms (a 4×4 array's climb took ~6 µs where its 16 elements
 * alone would be ~1 µs): the count bounds the time, it does not measure it.
 */
const CLIMB_EVALUATIONS = 40;
const CALL_OVERHEAD = 64;

export interface PullPrediction {
  pulls: BeamPull[];
  /** beams (frequency × beam) examined, and in all; fewer examined when the work bound stopped the prediction */
  examined: number;
  total: number;
}

/**
 * The pulled beams predicted before any table is built (check): the peak of the ideal total
 * pattern, found as the band analysis finds a peak (hill-climb on the analysis grid's cell
 * from d̂, refined on the exact pattern). Most beams' total pattern is highest at d̂'s own
 * cell (it is at least as high as its 8 neighbours): their peak is within half a cell (an
 * eighth of the beamwidth) of d̂, where the array factor is down by a small fraction of a
 * dB, and they are not examined further. A planar array's ideal |AF|² at a cell offset
 * does not depend on the beam, so it is evaluated once per frequency and offset, and only
 * the element pattern per beam (the same numbers as evaluating the total pattern anew).
 * Frequencies whose grid is past the analysis limit are skipped (check warns about them
 * already); the work is bounded by PREDICT_ELEMENT_EVALUATIONS.
 */
export function predictPulls(plan: Plan, skip: (fi: number) => boolean = () => false, budget = PREDICT_ELEMENT_EVALUATIONS): PullPrediction {
  const out: BeamPull[] = [];
  const nb = plan.beams.count;
  const total = nb * plan.frequenciesHz.length;
  if (!plan.element) return { pulls: out, examined: total, total };
  const n = plan.elements.count;
  let work = 0;
  let examined = 0;
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    if (skip(fi)) {
      examined += nb;
      continue;
    }
    const { du, dv } = gridShape(plan, fi);
    const ev = idealEvaluator(plan, fi);
    const element = ev.element!;
    // planar: |F|² at cell (m, n) for every beam; non-planar: the evaluator's total pattern
    const af = new Map<number, number>();
    const afAt = (m: number, k: number): number => {
      const key = m * 67108864 + k;
      let a = af.get(key);
      if (a === undefined) {
        const f = ev.field(m * du, k * dv);
        af.set(key, (a = f[0] * f[0] + f[1] * f[1]));
      }
      return a;
    };
    const power = ev.planar ? (m: number, k: number) => afAt(m, k) * element.power(ev.u0 + m * du, ev.v0 + k * dv) : (m: number, k: number) => ev.power(m * du, k * dv);
    // d̂'s cell and its 8 neighbours, which every beam looks at
    const near = ev.planar ? Float64Array.from({ length: 9 }, (_, q) => afAt((q % 3) - 1, Math.floor(q / 3) - 1)) : null;
    const home = near ? (m: number, k: number) => near[(k + 1) * 3 + m + 1]! * element.power(ev.u0 + m * du, ev.v0 + k * dv) : power;
    for (let b = 0; b < nb; b++) {
      if (work > budget) return { pulls: out, examined, total };
      examined++;
      const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!, w0 = plan.beams.w[b]!;
      ev.setBeam(u0, v0, w0);
      if (element instanceof LineCutPattern) element.setBeam(u0, v0);
      if (!ev.planar) work += 9 * (n + CALL_OVERHEAD);
      if (staysAtHome(ev, home)) continue;
      work += CLIMB_EVALUATIONS * (n + CALL_OVERHEAD);
      const steps = { evaluations: 0 };
      const r = peakOnDemand(ev, du, dv, u0, v0, power, steps);
      // the exact climb past the grid's (nearestPeak): one evaluation a quarter cell
      work += steps.evaluations * (n + CALL_OVERHEAD);
      const drop = afDrop(ev, r.du, r.dv);
      const pu = u0 + r.du, pv = v0 + r.dv;
      if (drop > PULL_DROP_DB) out.push({ fi, beam: b, peakU: pu, peakV: pv, pointingDeg: angleBetweenDeg({ u: u0, v: v0, w: w0 }, { u: pu, v: pv, w: uvToW(pu, pv) }), afDropDb: drop });
    }
  }
  return { pulls: out, examined, total };
}

/** Whether the total pattern at d̂ (cell 0, 0) is at least as high as at its 8 neighbouring cells (the hill-climb's first step). */
function staysAtHome(ev: AfEvaluator, power: (m: number, n: number) => number): boolean {
  const p0 = power(0, 0);
  for (let j = -1; j <= 1; j++)
    for (let i = -1; i <= 1; i++) {
      if (i === 0 && j === 0) continue;
      if ((ev.lockU && i !== 0) || (ev.lockV && j !== 0)) continue;
      if (power(i, j) > p0) return false;
    }
  return true;
}

/** When the work bound stopped the prediction: how far it got, and where the rest is judged. */
export function predictionStoppedNote(p: PullPrediction): string {
  return `the element pattern's pull was predicted for the first ${p.examined} of ${p.total} beam(s) only (a bound on check's work, PREDICT_ELEMENT_EVALUATIONS); build judges every realized peak and warns about pulled beams there`;
}

/**
 * One warning for the pulled beams (null when none): how many, the worst (largest pull) with
 * its commanded direction, peak and, given the metrics, its PSL, and what the numbers mean.
 */
export function pullWarning(plan: Plan, pulls: BeamPull[], psl?: (fi: number, beam: number) => number, predicted = false): string | null {
  if (!pulls.length) return null;
  const total = plan.beams.count * plan.frequenciesHz.length;
  const w = pulls.reduce((a, p) => (p.pointingDeg > a.pointingDeg ? p : a));
  const ghz = plan.frequenciesHz.length > 1 ? ` at ${(plan.frequenciesHz[w.fi]! / 1e9).toPrecision(6)} GHz` : "";
  const el = plan.element!;
  const what = el.pattern === "cosine" ? `cos^${el.exponent} θ element pattern` : "element pattern table";
  // a beam without a sidelobe in visible space has no PSL (beams.csv leaves it empty): it printed "PSL NaN dB"
  const pslDb = psl ? psl(w.fi, w.beam) : NaN;
  const pslText = psl ? (Number.isFinite(pslDb) ? `, PSL ${pslDb.toFixed(2)} dB` : ", PSL n/a: no sidelobe found") : "";
  const ids = pulls.slice(0, 8).map((p) => `${p.beam}${plan.frequenciesHz.length > 1 ? `@${(plan.frequenciesHz[p.fi]! / 1e9).toPrecision(6)}GHz` : ""}`).join(", ");
  return (
    `${pulls.length} of ${total} beam(s) ${predicted ? "will be" : "are"} pulled by the ${what} beyond the array's half-power main lobe ` +
    `(the ideal array factor at the ${predicted ? "ideal total pattern's" : "realized"} peak is more than 3 dB below its value at the commanded direction): ` +
    `worst beam ${w.beam}${ghz} commanded az ${plan.beams.azDeg[w.beam]!.toFixed(2)}° el ${plan.beams.elDeg[w.beam]!.toFixed(2)}°, peak ${w.pointingDeg.toFixed(2)}° away ` +
    `(array factor ${w.afDropDb.toFixed(1)} dB down there${pslText}); beams ${ids}${pulls.length > 8 ? ", …" : ""}. ` +
    `Their pointing error and PSL describe the element pattern's pull, not quantisation (a PSL near 0 dB or positive is the array's own lobe left behind); ` +
    `steer them less far, or use a broader element pattern`
  );
}

/**
 * With an element pattern, beams that are not pulled can still show a PSL near 0 dB or
 * positive, in the ideal pattern as well: the total pattern weighs sidelobes nearer the
 * element's maximum (broadside for a cosine) above the scanned main lobe. One note for them
 * (null when none): PSL ≥ −3 dB realized and ideal, not among `pulls`.
 */
export function elementSidelobeNote(plan: Plan, pulls: BeamPull[], metrics: Float64Array, stride: number, ipsl: number, ipslIdeal: number): string | null {
  if (!plan.element) return null;
  const nb = plan.beams.count;
  const pulled = new Set(pulls.map((p) => p.fi * nb + p.beam));
  const hits: number[] = [];
  for (let k = 0; k < nb * plan.frequenciesHz.length; k++) {
    if (pulled.has(k)) continue;
    const p = metrics[k * stride + ipsl]!, pi = ipslIdeal >= 0 ? metrics[k * stride + ipslIdeal]! : p;
    if (p >= -PULL_DROP_DB && pi >= -PULL_DROP_DB) hits.push(k);
  }
  if (!hits.length) return null;
  const name = (k: number) => `${k % nb}${plan.frequenciesHz.length > 1 ? `@${(plan.frequenciesHz[Math.floor(k / nb)]! / 1e9).toPrecision(6)}GHz` : ""}`;
  return (
    `${hits.length} beam(s) within their main lobe still have a PSL of −3 dB or more, the ideal taper's too (beams ${hits.slice(0, 8).map(name).join(", ")}${hits.length > 8 ? ", …" : ""}): ` +
    `the total pattern |AF|²·E weighs sidelobes nearer the element pattern's maximum above the scanned main lobe; this is the element pattern, not quantisation (compare sll_rise_db)`
  );
}
