/**
 * A simulated antenna range for the calibration tests (invented arrays and offsets, not
 * measurements). The forward model is written out here independently of the solver:
 * the field at the probe is Σ_n w_n·S_n(code)·h_n with w_n = 10^(g_n/20)·e^{jc_n}, S_n the
 * realized state and h_n the path (interface contract, Version 2, "steercode calibrate").
 */
import { mulberry32 } from "../src/core/quantize/randomized.js";
import type { Plan } from "../src/core/plan.js";

const DEG = Math.PI / 180;
const C = 299792458;

export type SimProbe = { kind: "far"; azDeg: number; elDeg: number } | { kind: "near"; x: number; y: number; z: number };

export interface Truth {
  phaseDeg: number[];
  gainDb: number[];
}

export function randomTruth(n: number, seed: number, gainSigmaDb = 1): Truth {
  const r = mulberry32(seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
  return { phaseDeg: Array.from({ length: n }, () => r() * 360 - 180), gainDb: Array.from({ length: n }, () => gauss() * gainSigmaDb) };
}

/** Realized state of phase code k of element n: amplitude (linear) and phase (rad), absolute (code 0 included). */
export type StateFn = (n: number, k: number) => { mag: number; ang: number };
export const idealStates = (bits: number): StateFn => (_n, k) => ({ mag: 1, ang: (k * 2 * Math.PI) / 2 ** bits });

function path(p: SimProbe, x: number, y: number, z: number, k: number): [number, number] {
  if (p.kind === "far") {
    const a = p.azDeg * DEG, e = p.elDeg * DEG;
    const ph = k * (x * Math.cos(e) * Math.sin(a) + y * Math.sin(e) + z * Math.cos(e) * Math.cos(a));
    return [Math.cos(ph), Math.sin(ph)];
  }
  const d = Math.hypot(p.x - x, p.y - y, p.z - z);
  return [Math.cos(-k * d) / d, Math.sin(-k * d) / d];
}

/** Element fields at the probe for each code: f[n](k) = w_n·S_n(k)·h_n. */
function elementField(plan: Plan, truth: Truth, states: StateFn, probe: SimProbe, fHz: number) {
  const el = plan.elements;
  const k = (2 * Math.PI * fHz) / C;
  return (n: number, code: number): [number, number] => {
    const s = states(n, code);
    const a = Math.pow(10, truth.gainDb[n]! / 20) * s.mag;
    const ph = truth.phaseDeg[n]! * DEG + s.ang;
    const [hr, hi] = path(probe, el.x[n]!, el.y[n]!, el.z[n]!, k);
    const wr = a * Math.cos(ph), wi = a * Math.sin(ph);
    return [wr * hr - wi * hi, wr * hi + wi * hr];
  };
}

/** REV readings: total power (dB + an arbitrary common reference + Gaussian noise σ dB). */
export function simulateRev(plan: Plan, truth: Truth, o: { states: StateFn; probe: SimProbe; codes: number[]; noiseDb: number; seed: number; fHz?: number; referenceDb?: number }): { element: number; code: number; powerDb: number }[] {
  const el = plan.elements;
  const f = elementField(plan, truth, o.states, o.probe, o.fHz ?? plan.frequenciesHz[0]!);
  let E0r = 0, E0i = 0;
  for (let n = 0; n < el.count; n++) {
    if (!el.enabled[n]) continue;
    const [a, b] = f(n, 0);
    E0r += a;
    E0i += b;
  }
  const r = mulberry32(o.seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
  const out: { element: number; code: number; powerDb: number }[] = [];
  for (let n = 0; n < el.count; n++) {
    if (!el.enabled[n]) continue;
    const [z0r, z0i] = f(n, 0);
    for (const code of o.codes) {
      const [zr, zi] = f(n, code);
      const Er = E0r + zr - z0r, Ei = E0i + zi - z0i;
      out.push({ element: el.ids[n]!, code, powerDb: 10 * Math.log10(Er * Er + Ei * Ei) + (o.referenceDb ?? 37.25) + o.noiseDb * gauss() });
    }
  }
  return out;
}

/** |e_n| / |E0| per element index: the element's share of the whole array's field (noise-free). */
export function fieldShare(plan: Plan, truth: Truth, states: StateFn, probe: SimProbe): number[] {
  const el = plan.elements;
  const f = elementField(plan, truth, states, probe, plan.frequenciesHz[0]!);
  let E0r = 0, E0i = 0;
  for (let n = 0; n < el.count; n++) if (el.enabled[n]) { const [a, b] = f(n, 0); E0r += a; E0i += b; }
  const E0 = Math.hypot(E0r, E0i);
  return Array.from({ length: el.count }, (_, n) => Math.hypot(...f(n, 0)) / E0);
}

export function revCsv(rows: { element: number; code: number; powerDb: number; frequencyHz?: string }[]): string {
  const perF = rows.some((r) => r.frequencyHz !== undefined);
  return (perF ? "frequency_hz,element,phase_code,power_db\n" : "element,phase_code,power_db\n") + rows.map((r) => `${perF ? r.frequencyHz + "," : ""}${r.element},${r.code},${r.powerDb.toFixed(9)}`).join("\n") + "\n";
}

/** Truth referred as the tool refers: circular mean phase 0° and mean gain 0 dB over enabled elements. */
export function referTruth(plan: Plan, t: Truth): Truth {
  let sr = 0, si = 0, sg = 0, n = 0;
  for (let i = 0; i < t.phaseDeg.length; i++) {
    if (!plan.elements.enabled[i]) continue;
    sr += Math.cos(t.phaseDeg[i]! * DEG);
    si += Math.sin(t.phaseDeg[i]! * DEG);
    sg += t.gainDb[i]!;
    n++;
  }
  const c = Math.atan2(si, sr) / DEG, g = sg / n;
  return { phaseDeg: t.phaseDeg.map((p) => wrap(p - c)), gainDb: t.gainDb.map((x) => x - g) };
}

export function wrap(d: number): number {
  return d - 360 * Math.round(d / 360);
}
