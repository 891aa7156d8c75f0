/**
 * The table engine: for every frequency and beam, codes → words, handed to a
 * consumer one beam at a time through caller-owned, reused buffers.
 */
import type { Plan } from "./plan.js";
import { allocBeamCodes, makeQuantizer, prepareFrequency, type BeamCodes, type FrequencyPrep, type Quantizer } from "./quantize/index.js";
import { packPlan } from "./words.js";
import { OptimizedQuantizer, OPT_FIELDS, writeReport } from "./quantize/optimized.js";

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
    // the loops are functions of their own: V8 compiles a long loop on the stack (OSR)
    // before the code after it has run, and that code then bailed out at every beam
    // (64×64: "insufficient type feedback", 441 times in a 441-beam build)
    if (!(this.valid && sameCodes(codes.attenCode, this.lastAtten))) this.rebuild(codes.attenCode);
    packWords(words, this.base, codes.phaseCode, this.phaseMask, this.shift);
  }
}

function sameCodes(a: Int32Array, b: Int32Array): boolean {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

function packWords(words: Uint32Array, base: Uint32Array, pc: Int32Array, phaseMask: Uint32Array, shift: number): void {
  for (let i = 0; i < words.length; i++) words[i] = (base[i]! | ((pc[i]! & phaseMask[i]!) << shift)) >>> 0;
}


/**
 * Codes computed elsewhere (an optimized build computes them once, in the analysis
 * chunks): `ready` says whether beam (fi, b) is available yet; `take` overwrites the
 * phase and attenuation codes in `codes` and, for the optimized quantizer, writes the
 * beam's record at rec[off …].
 */
export interface CodeSource {
  ready(fi: number, b: number): boolean;
  take(fi: number, b: number, codes: BeamCodes, rec: Float64Array | null, off: number): void;
}

export interface FrequencySummary {
  gRefDb: number;
  gRefElement: number;
  clipped: number;
}

/**
 * Every (frequency, beam) through the quantizer and packer, in order, a slice at a
 * time: `step(n)` does up to n beams and says whether it is finished, so that an
 * async caller can yield between slices (signals are handled, progress is drawn).
 */
export class TableRun {
  private readonly codes: BeamCodes;
  private readonly words: Uint32Array;
  private readonly packer: BeamPacker;
  private fi = 0;
  private b = 0;
  private q: Quantizer | null = null;
  private prep: FrequencyPrep | null = null;
  private clipped = 0;
  done = 0;
  readonly summaries: FrequencySummary[] = [];
  /**
   * optimized quantizer only: per (frequency, beam) what the optimisation achieved on the
   * exact analysis, OPT_FIELDS numbers a beam (see optimized.ts); null otherwise.
   */
  readonly optimized: Float64Array | null;
  constructor(
    private readonly plan: Plan,
    private readonly sink: BeamSink,
    private readonly commanded = true,
    private readonly source: CodeSource | null = null,
  ) {
    const n = plan.elements.count;
    this.codes = allocBeamCodes(n);
    this.words = new Uint32Array(n);
    this.packer = new BeamPacker(plan);
    this.optimized = plan.quantizer.method === "optimized" ? new Float64Array(plan.frequenciesHz.length * plan.beams.count * OPT_FIELDS) : null;
  }
  step(maxBeams: number): boolean {
    const plan = this.plan;
    let left = maxBeams;
    while (this.fi < plan.frequenciesHz.length && left > 0) {
      if (this.source && !this.source.ready(this.fi, this.b)) return false;
      if (!this.q) {
        this.prep = prepareFrequency(plan, this.fi);
        // with a code source the quantizer supplies only what does not depend on the choice (commanded values, clips)
        const qp: Plan = this.source ? { ...plan, quantizer: { method: "nearest", seed: plan.quantizer.seed } } : plan;
        this.q = makeQuantizer(qp, this.fi, this.prep, { commanded: this.commanded });
        this.clipped = 0;
      }
      this.q.beam(this.b, this.codes);
      const off = (this.fi * plan.beams.count + this.b) * OPT_FIELDS;
      if (this.source) this.source.take(this.fi, this.b, this.codes, this.optimized, off);
      else if (this.optimized && this.q instanceof OptimizedQuantizer) writeReport(this.q.report, this.optimized, off);
      this.clipped = Math.max(this.clipped, this.codes.clipped);
      this.packer.pack(this.codes, this.words);
      this.sink(this.fi, this.b, this.words, this.codes);
      this.done++;
      left--;
      if (++this.b === plan.beams.count) {
        this.summaries.push({ gRefDb: this.prep!.gRefDb, gRefElement: this.prep!.gRefElement, clipped: this.clipped });
        this.fi++;
        this.b = 0;
        this.q = null;
      }
    }
    return this.fi >= plan.frequenciesHz.length;
  }
}

/** Run every (frequency, beam) through the quantizer and packer, synchronously. */
export function runTables(plan: Plan, sink: BeamSink, onBeam?: (done: number) => void, opts: { commanded?: boolean } = {}): FrequencySummary[] {
  return runTablesWith(plan, sink, onBeam, opts).summaries;
}

/** runTables, returning the whole run (summaries and, for the optimized quantizer, its per-beam records). */
export function runTablesWith(plan: Plan, sink: BeamSink, onBeam?: (done: number) => void, opts: { commanded?: boolean } = {}): TableRun {
  const run = new TableRun(plan, sink, opts.commanded ?? true);
  while (!run.step(64)) onBeam?.(run.done);
  onBeam?.(run.done);
  return run;
}
