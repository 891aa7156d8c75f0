/**
 * The table engine: for every frequency and beam, codes → words, handed to a
 * consumer one beam at a time through caller-owned, reused buffers.
 */
import type { Plan } from "./plan.js";
import { allocBeamCodes, makeQuantizer, prepareFrequency, type BeamCodes } from "./quantize/index.js";
import { packPlan } from "./words.js";

export interface BeamSink {
  (fi: number, b: number, words: Uint32Array, codes: BeamCodes): void;
}

/** Words of one beam from its codes: "off" for disabled elements. */
export function packBeam(plan: Plan, codes: BeamCodes, words: Uint32Array): void {
  const pp = packPlan(plan.word);
  const en = plan.elements.enabled;
  const off = plan.word.off >>> 0;
  const pm = pp.hasPhase ? pp.phaseMask : 0;
  const am = pp.hasAtten ? pp.attenMask : 0;
  const ps = pp.phaseShift;
  const as = pp.attenShift;
  const base = pp.constant;
  const pc = codes.phaseCode;
  const ac = codes.attenCode;
  for (let i = 0; i < words.length; i++)
    words[i] = en[i] ? (base | ((pc[i]! & pm) << ps) | ((ac[i]! & am) << as)) >>> 0 : off;
}

export interface FrequencySummary {
  gRefDb: number;
  gRefElement: number;
  clipped: number;
}

/** Run every (frequency, beam) through the quantizer and packer. Beams from `first` to `last` (exclusive). */
export function runTables(plan: Plan, sink: BeamSink, onBeam?: (done: number) => void): FrequencySummary[] {
  const n = plan.elements.count;
  const codes = allocBeamCodes(n);
  const words = new Uint32Array(n);
  const out: FrequencySummary[] = [];
  let done = 0;
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    const prep = prepareFrequency(plan, fi);
    const q = makeQuantizer(plan, fi, prep);
    let clipped = 0;
    for (let b = 0; b < plan.beams.count; b++) {
      q.beam(b, codes);
      clipped = Math.max(clipped, codes.clipped);
      packBeam(plan, codes, words);
      sink(fi, b, words, codes);
      if (onBeam) onBeam(++done);
    }
    out.push({ gRefDb: prep.gRefDb, gRefElement: prep.gRefElement, clipped });
  }
  return out;
}
