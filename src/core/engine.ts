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

/**
 * Packs the words of one beam from its codes ("off" for disabled elements). The
 * per-element part that does not depend on the phase code (constant fields, the
 * attenuation field, the off word) is cached and rebuilt only when the attenuation
 * codes change, so the per-word work is one mask, shift and or.
 */
export class BeamPacker {
  private readonly base: Uint32Array;
  private readonly phaseMask: Uint32Array;
  private readonly lastAtten: Int32Array;
  private readonly shift: number;
  private valid = false;
  constructor(private readonly plan: Plan) {
    const n = plan.elements.count;
    this.base = new Uint32Array(n);
    this.phaseMask = new Uint32Array(n);
    this.lastAtten = new Int32Array(n);
    this.shift = packPlan(plan.word).phaseShift;
  }
  private rebuild(atten: Int32Array): void {
    const pp = packPlan(this.plan.word);
    const en = this.plan.elements.enabled;
    const off = this.plan.word.off >>> 0;
    const am = pp.hasAtten ? pp.attenMask : 0;
    const pm = pp.hasPhase ? pp.phaseMask : 0;
    for (let i = 0; i < atten.length; i++) {
      this.base[i] = en[i] ? (pp.constant | ((atten[i]! & am) << pp.attenShift)) >>> 0 : off;
      this.phaseMask[i] = en[i] ? pm : 0;
    }
    this.lastAtten.set(atten);
    this.valid = true;
  }
  pack(codes: BeamCodes, words: Uint32Array): void {
    const ac = codes.attenCode;
    let same = this.valid;
    if (same) for (let i = 0; i < ac.length; i++) if (ac[i] !== this.lastAtten[i]) { same = false; break; }
    if (!same) this.rebuild(ac);
    const { base, phaseMask, shift } = this;
    const pc = codes.phaseCode;
    for (let i = 0; i < words.length; i++) words[i] = (base[i]! | ((pc[i]! & phaseMask[i]!) << shift)) >>> 0;
  }
}

/** Words of one beam from its codes: "off" for disabled elements. */
export function packBeam(plan: Plan, codes: BeamCodes, words: Uint32Array): void {
  new BeamPacker(plan).pack(codes, words);
}

export interface FrequencySummary {
  gRefDb: number;
  gRefElement: number;
  clipped: number;
}

/** Run every (frequency, beam) through the quantizer and packer. Beams from `first` to `last` (exclusive). */
export function runTables(plan: Plan, sink: BeamSink, onBeam?: (done: number) => void, opts: { commanded?: boolean } = {}): FrequencySummary[] {
  const n = plan.elements.count;
  const codes = allocBeamCodes(n);
  const words = new Uint32Array(n);
  const packer = new BeamPacker(plan);
  const out: FrequencySummary[] = [];
  let done = 0;
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    const prep = prepareFrequency(plan, fi);
    const q = makeQuantizer(plan, fi, prep, { commanded: opts.commanded ?? true });
    let clipped = 0;
    for (let b = 0; b < plan.beams.count; b++) {
      q.beam(b, codes);
      clipped = Math.max(clipped, codes.clipped);
      packer.pack(codes, words);
      sink(fi, b, words, codes);
      if (onBeam) onBeam(++done);
    }
    out.push({ gRefDb: prep.gRefDb, gRefElement: prep.gRefElement, clipped });
  }
  return out;
}
