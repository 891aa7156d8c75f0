/** Derived facts an engineer wants before a range session (`steercode check`). */
import { gratingFreeScanDeg, gratingLobeTest, pointSetDiameter, reciprocalVectors } from "./geometry.js";
import { enabledCount, type Plan } from "./plan.js";
import { prepareFrequency } from "./quantize/prepare.js";
import { SPEED_OF_LIGHT } from "./units.js";
import { squintBandwidth, type SquintBandwidth } from "./band.js";
import { analysisSizeProblem, MAX_ANALYSED_BEAMS } from "./pattern/grid.js";
import { D } from "./exact.js";

export interface FrequencyFacts {
  frequencyHz: number;
  wavelengthM: number;
  /** Lattice pitches in wavelengths (null for element lists). */
  dxLambda: number | null;
  dyLambda: number | null;
  /** Widest grating-lobe-free scan from broadside (θ, deg) along x (az plane) and y (el plane). */
  scanLimitXDeg: number | null;
  scanLimitYDeg: number | null;
  farFieldM: number;
  gRefDb: number;
  clipped: number;
  /** Beams that put a grating lobe into visible space. */
  gratingBeams: number[];
  /** Instantaneous bandwidth at the grid's widest scan (null: every beam at broadside). */
  squint: SquintBandwidth | null;
  /** With a band: whether it reaches past the edges of that bandwidth (phase steering squints too far: true time delay). */
  bandNeedsTrueTimeDelay: boolean | null;
}

export interface Facts {
  elements: number;
  enabledElements: number;
  beams: number;
  frequencies: number;
  words: number;
  tableBytes: number;
  apertureM: number;
  /** Widest scan of the beam set from broadside, θ in degrees. */
  maxScanDeg: number;
  lsbDeg: number;
  attenRangeDb: number;
  perFrequency: FrequencyFacts[];
  warnings: string[];
}

/** Largest aperture dimension D: the lattice's outer size along its diagonal, or the largest element separation (exact, see pointSetDiameter). */
export function apertureSizeM(plan: Plan): number {
  if (plan.lattice) {
    const l = plan.lattice;
    const wx = (l.columns + (l.rows > 1 ? l.offset : 0)) * l.dx;
    const wy = l.rows * l.dy;
    return Math.hypot(wx, wy);
  }
  const e = plan.elements;
  return pointSetDiameter(e.x, e.y, e.z, e.count);
}

/** "element 7" or "elements 3, 7, 12" (the first `max`, then how many more). */
export function idList(ids: number[], max = 20): string {
  const shown = ids.slice(0, max).join(", ");
  const more = ids.length > max ? ` … and ${ids.length - max} more` : "";
  return `${ids.length === 1 ? "element" : "elements"} ${shown}${more}`;
}

/**
 * The scenario's facts and warnings. `squint: false` (callers that want the warnings only:
 * build, the library's plan check) skips the squint bandwidth unless a band's warning needs
 * it: an exact pattern search per frequency, 12–30 ms of a small build's cold start.
 */
export function deriveFacts(plan: Plan, opts: { squint?: boolean } = {}): Facts {
  const D = apertureSizeM(plan);
  const warnings: string[] = [];
  const perFrequency: FrequencyFacts[] = plan.frequenciesHz.map((f, fi) => {
    const lambda = SPEED_OF_LIGHT / f;
    const prep = prepareFrequency(plan, fi);
    let gratingBeams: number[] = [];
    let sx: number | null = null;
    let sy: number | null = null;
    if (plan.lattice) {
      const g = reciprocalVectors(plan.lattice, lambda);
      sx = gratingFreeScanDeg(g, 0);
      sy = gratingFreeScanDeg(g, Math.PI / 2);
      const visible = gratingLobeTest(g);
      for (let b = 0; b < plan.beams.count; b++) if (visible(plan.beams.u[b]!, plan.beams.v[b]!)) gratingBeams.push(b);
    }
    return {
      frequencyHz: f,
      wavelengthM: lambda,
      dxLambda: plan.lattice ? plan.lattice.dx / lambda : null,
      dyLambda: plan.lattice ? plan.lattice.dy / lambda : null,
      scanLimitXDeg: sx,
      scanLimitYDeg: sy,
      farFieldM: (2 * D * D) / lambda,
      gRefDb: prep.gRefDb,
      clipped: prep.clipped,
      gratingBeams,
      ...(opts.squint === false && !plan.band ? { squint: null, bandNeedsTrueTimeDelay: null } : squintFacts(plan, fi)),
    };
  });
  for (const pf of perFrequency) {
    const fGHz = (pf.frequencyHz / 1e9).toPrecision(6);
    if (pf.gratingBeams.length)
      warnings.push(`${fGHz} GHz: ${pf.gratingBeams.length} of ${plan.beams.count} beams put a grating lobe into visible space (first: beam ${pf.gratingBeams[0]}); their psl_db will sit near 0 dB`);
    if (pf.bandNeedsTrueTimeDelay && plan.band && pf.squint) {
      const band = plan.band.frequenciesHz;
      warnings.push(
        `${fGHz} GHz table: the band ${(band[0]! / 1e9).toPrecision(6)}–${(band[band.length - 1]! / 1e9).toPrecision(6)} GHz reaches past ${(pf.squint.lowHz / 1e9).toPrecision(6)}–${pf.squint.highHz === null ? "∞" : (pf.squint.highHz / 1e9).toPrecision(6) + " GHz"}, where the beam at θ = ${pf.squint.thetaDeg.toFixed(1)}° squints by half its ${pf.squint.beamwidthDeg.toFixed(2)}° beamwidth: the band asks for true time delay (or one table per sub-band)`,
      );
    }
    if (pf.clipped)
      warnings.push(`${fGHz} GHz: ${pf.clipped} element(s) need more attenuation than the attenuator's ${((2 ** plan.attenBits - 1) * plan.attenStepDb).toFixed(2)} dB range; their codes are clipped to the last step`);
  }
  warnings.push(...shortSteps(plan));
  const big = analysisSizeProblem(plan);
  const analysed = plan.frequenciesHz.length * plan.beams.count;
  if (analysed > MAX_ANALYSED_BEAMS) warnings.push(`build refuses to analyse ${plan.frequenciesHz.length} frequencies × ${plan.beams.count} beams = ${analysed} beams (at most ${MAX_ANALYSED_BEAMS}); build --no-analysis writes the tables`);
  if (big) warnings.push(big.band ? `build refuses its band analysis (sweep, report and --no-analysis builds are not concerned): ${big.message}` : `build, sweep and report refuse to analyse this scenario: ${big.message}`);
  if (!plan.lattice && plan.elements.count > 1) warnings.push("element list: grating-lobe limits are not computed for arbitrary geometries");
  if (plan.attenBits === 0 && plan.taper.kind !== "uniform") warnings.push("no attenuator: the taper cannot be applied; every tapered element is clipped");
  const attenField = plan.word.fields.find((f) => f.name === "atten");
  if (plan.attenBits === 0 && attenField)
    warnings.push(`no attenuator ("bits": 0) but the word has a ${attenField.width}-bit "atten" field: it holds 0 (no attenuation) in every word; the taper and calibration gains are not applied`);
  const disabledIds = Array.from(plan.elements.ids).filter((_, i) => !plan.elements.enabled[i]);
  if (disabledIds.length)
    warnings.push(`${disabledIds.length} element(s) disabled (${idList(disabledIds)}): they get the off word and take no part in G_ref or the analysis`);
  const words = plan.frequenciesHz.length * plan.beams.count * plan.elements.count;
  let maxSin = 0;
  for (let b = 0; b < plan.beams.count; b++) maxSin = Math.max(maxSin, Math.hypot(plan.beams.u[b]!, plan.beams.v[b]!));
  return {
    maxScanDeg: (Math.asin(Math.min(1, maxSin)) * 180) / Math.PI,
    elements: plan.elements.count,
    enabledElements: enabledCount(plan),
    beams: plan.beams.count,
    frequencies: plan.frequenciesHz.length,
    words,
    tableBytes: words * plan.word.bytes,
    apertureM: D,
    lsbDeg: 360 / 2 ** plan.phaseBits,
    attenRangeDb: (2 ** plan.attenBits - 1) * plan.attenStepDb,
    perFrequency,
    warnings,
  };
}

function squintFacts(plan: Plan, fi: number): { squint: SquintBandwidth | null; bandNeedsTrueTimeDelay: boolean | null } {
  const squint = squintBandwidth(plan, fi);
  if (!plan.band) return { squint, bandNeedsTrueTimeDelay: null };
  const band = plan.band.frequenciesHz;
  const lo = band[0]!, hi = band[band.length - 1]!;
  const needs = squint !== null && (lo < squint.lowHz || (squint.highHz !== null && hi > squint.highHz));
  return { squint, bandNeedsTrueTimeDelay: needs };
}

/**
 * Grid axes and a band whose step does not divide the span end at the last whole step,
 * short of "to" (27 … 29 GHz in 0.3 GHz steps ends at 28.8 GHz): said, not silently dropped.
 */
export function shortSteps(plan: Plan): string[] {
  const out: string[] = [];
  const spec = plan.beams.spec;
  if (spec.grid) {
    const names: Record<string, [string, string]> = { azel: ["az", "el"], uv: ["u", "v"], thetaphi: ["theta", "phi"] };
    const [n1, n2] = names[spec.kind]!;
    for (const [name, a] of [[n1, spec.inner], [n2, spec.outer]] as const) {
      if (a.to === undefined) continue;
      const last = new D(a.from).plus(new D(a.step).times(a.count - 1));
      if (last.lt(a.to)) out.push(`/beams/${name}: step ${a.step} does not divide ${a.from} … ${a.to}: the grid ends at ${last.toString()}, ${new D(a.to).minus(last).toString()} short of "to"`);
    }
  }
  const band = plan.band;
  if (band?.toExact !== undefined) {
    const last = band.frequenciesExact[band.frequenciesExact.length - 1]!;
    if (new D(last).lt(band.toExact)) {
      const ghz = (x: string | InstanceType<typeof D>) => `${new D(x).div(1e9).toString()} GHz`;
      out.push(`/band: the step does not divide ${ghz(band.frequenciesExact[0]!)} … ${ghz(band.toExact)}: the band ends at ${ghz(last)}, ${ghz(new D(band.toExact).minus(last))} short of "to"`);
    }
  }
  return out;
}
