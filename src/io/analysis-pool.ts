/**
 * Beams split across worker_threads (`--jobs N`: N threads in all). Chunks of beams
 * are claimed from a shared counter (Atomics.add), so the split balances itself:
 * workers start while the main thread streams the tables, and the main thread joins
 * in once the tables are written. Metrics go straight into one shared Float64Array
 * [frequency][beam][metric] (METRICS numbers a beam: flat next to the tables). A
 * failing worker rejects the whole analysis.
 */
import { Worker } from "node:worker_threads";
import { setImmediate as yieldNow } from "node:timers/promises";
import type { Plan } from "../core/plan.js";
import type { CodeSource } from "../core/engine.js";
import { METRICS } from "../core/pattern/analyze.js";
import { analyseRange, type AnalyzerCache } from "../core/pattern/run.js";
import { SQUINT_METRICS } from "../core/band.js";
import { OptimizedQuantizer, OPT_FIELDS, writeReport } from "../core/quantize/optimized.js";
import { analysisSizeProblem } from "../core/pattern/grid.js";
import { InputError } from "../core/errors.js";

/** Refuse (exit 2, before any work) an analysis whose grid would pass its stated size (grid.ts MAX_ANALYSIS_CELLS). */
export function refuseOversizedAnalysis(plan: Plan, file: string, opts: { band?: boolean } = {}): void {
  const p = analysisSizeProblem(plan, opts);
  if (p) throw new InputError({ file, pointer: p.band ? "/band" : "/frequency", message: p.message });
}

export const CHUNK_BEAMS = 8;

/** A part to analyse the plan with (the sweep); the build uses the plan's own part. */
export interface Variant {
  phaseBits: number;
  attenBits: number;
  attenStepDb: number;
  attenStepExact: string;
  quantizer: Plan["quantizer"];
}

export interface SharedAnalysis {
  counter: Int32Array;
  /** [variant][frequency][beam][metric] */
  metrics: Float64Array;
  beams: number;
  frequencies: number;
  variants: Variant[] | null;
  /** compute the ideal pattern too (false: realized only; psl_ideal/sll_rise left NaN) */
  ideal: boolean;
  /** optimized builds: codes handed to the table writer through a bounded ring (see CodeRing) */
  ring: CodeRing | null;
  /** band analysis (build only, no variants): [frequency][beam][band point][SQUINT_METRICS] */
  squint: Float64Array | null;
}

/**
 * The optimized quantizer's codes are costly, so a build computes them once, in the
 * analysis chunks, and the main thread's table writer takes them from here. Chunks are
 * claimed only `slots` ahead of the table writer (memory stays flat in beams); slot
 * id mod slots holds chunk id's codes [beam][element] (phase, then atten) and records.
 */
export interface CodeRing {
  slots: number;
  elements: number;
  codes: Int32Array;
  records: Float64Array;
  /** per slot: chunk id + 1 once its codes are written */
  ready: Int32Array;
  /** chunks the table writer has taken */
  consumed: Int32Array;
}

export function allocRing(slots: number, elements: number): CodeRing {
  const sab = (bytes: number) => new SharedArrayBuffer(bytes);
  return {
    slots,
    elements,
    codes: new Int32Array(sab(slots * CHUNK_BEAMS * elements * 2 * 4)),
    records: new Float64Array(sab(slots * CHUNK_BEAMS * OPT_FIELDS * 8)),
    ready: new Int32Array(sab(slots * 4)),
    consumed: new Int32Array(sab(4)),
  };
}

/** The table writer's view of the ring (TableRun's CodeSource): beams in table order, chunk by chunk. */
export function ringSource(ring: CodeRing, beams: number): CodeSource {
  const perF = Math.ceil(beams / CHUNK_BEAMS);
  const n = ring.elements;
  return {
    ready(fi, b) {
      const id = fi * perF + Math.floor(b / CHUNK_BEAMS);
      return Atomics.load(ring.ready, id % ring.slots) === id + 1;
    },
    take(fi, b, codes, rec, off) {
      const id = fi * perF + Math.floor(b / CHUNK_BEAMS);
      const k = (id % ring.slots) * CHUNK_BEAMS + (b % CHUNK_BEAMS);
      codes.phaseCode.set(ring.codes.subarray(k * n * 2, k * n * 2 + n));
      codes.attenCode.set(ring.codes.subarray(k * n * 2 + n, k * n * 2 + 2 * n));
      if (rec) rec.set(ring.records.subarray(k * OPT_FIELDS, (k + 1) * OPT_FIELDS), off);
      // the chunk's last beam: its slot may be reused
      if (b % CHUNK_BEAMS === CHUNK_BEAMS - 1 || b === beams - 1) {
        Atomics.add(ring.consumed, 0, 1);
        Atomics.notify(ring.consumed, 0);
      }
    },
  };
}

/** Claim the next chunk id, or -1 when none is left or (with a ring) the next one would run too far ahead of the tables. */
function claim(s: SharedAnalysis, total: number, wait: boolean): number {
  for (;;) {
    const c = Atomics.load(s.counter, 0);
    if (c >= total) return -1;
    if (s.ring) {
      const done = Atomics.load(s.ring.consumed, 0);
      if (c >= done + s.ring.slots) {
        if (!wait) return -1;
        Atomics.wait(s.ring.consumed, 0, done, 50);
        continue;
      }
    }
    if (Atomics.compareExchange(s.counter, 0, c, c + 1) === c) return c;
  }
}

function chunkCount(s: SharedAnalysis): number {
  return (s.variants?.length ?? 1) * s.frequencies * Math.ceil(s.beams / CHUNK_BEAMS);
}

export function variantPlan(plan: Plan, v: Variant | undefined): Plan {
  return v ? { ...plan, ...v, phaseStates: plan.phaseStates, attenStates: plan.attenStates } : plan;
}

/**
 * Claim and compute chunks until none are left (or `limit` chunks are done); returns the
 * number of beams done. `wait`: block while the ring is full (workers); the main thread
 * returns instead, to write tables.
 */
export function drainChunks(plan: Plan, s: SharedAnalysis, onProgress?: (beams: number) => void, cache: { c: AnalyzerCache | null; v?: number } = { c: null }, limit = Infinity, wait = true): number {
  const perF = Math.ceil(s.beams / CHUNK_BEAMS);
  const perV = perF * s.frequencies;
  const total = chunkCount(s);
  const plans = new Map<number, Plan>();
  let done = 0;
  for (let k = 0; k < limit; k++) {
    const id = claim(s, total, wait);
    if (id < 0) return done;
    const v = Math.floor(id / perV);
    const fi = Math.floor((id % perV) / perF);
    const from = (id % perF) * CHUNK_BEAMS;
    const to = Math.min(s.beams, from + CHUNK_BEAMS);
    if (!plans.has(v)) plans.set(v, variantPlan(plan, s.variants?.[v]));
    if (cache.v !== v) {
      cache.c = null;
      cache.v = v;
    }
    const base = (v * s.frequencies + fi) * s.beams;
    const ring = s.ring;
    const slot = ring ? id % ring.slots : 0;
    const per = s.squint ? s.squint.length / (s.frequencies * s.beams) : 0;
    const squint = s.squint ? s.squint.subarray((base + from) * per, (base + to) * per) : null;
    analyseRange(plans.get(v)!, fi, from, to, s.metrics.subarray((base + from) * METRICS, (base + to) * METRICS), cache, s.ideal, ring ? (b, codes, q) => {
      const n = ring.elements;
      const o = (slot * CHUNK_BEAMS + (b - from)) * n * 2;
      ring.codes.set(codes.phaseCode, o);
      ring.codes.set(codes.attenCode, o + n);
      if (q instanceof OptimizedQuantizer) writeReport(q.report, ring.records, (slot * CHUNK_BEAMS + (b - from)) * OPT_FIELDS);
    } : undefined, squint);
    if (ring) {
      Atomics.store(ring.ready, slot, id + 1);
      Atomics.notify(ring.ready, slot);
    }
    done += to - from;
    onProgress?.(to - from);
  }
  return done;
}

function finished(s: SharedAnalysis): boolean {
  return Atomics.load(s.counter, 0) >= chunkCount(s);
}

export interface AnalysisJob {
  /** Join in on the calling thread (after the tables), then wait for the workers. */
  finish(): Promise<Float64Array>;
  /** Stop the workers (on an error elsewhere). */
  cancel(): void;
  /** optimized builds: where the table writer takes its codes from */
  ring: CodeRing | null;
  /** The band analysis (valid after finish), null without a band. */
  readonly squint: Float64Array | null;
  /** The calling thread computes one chunk if one may be claimed now; returns the beams done. Throws a worker's failure. */
  help(): number;
}

/** The worker: compiled JS in dist; from source (tests), a bootstrap that registers tsx first. */
function makeWorker(): Worker {
  if (!import.meta.url.endsWith(".ts")) return new Worker(new URL("./analysis-worker.js", import.meta.url));
  const target = new URL("./analysis-worker.ts", import.meta.url).href;
  const boot = `import("tsx/esm/api").then((t) => { t.register(); return import(${JSON.stringify(target)}); });`;
  return new Worker(boot, { eval: true });
}

/**
 * Workers started ahead of the job (before the scenario is even loaded), so their
 * start-up overlaps the main thread's; each takes one job. Unused ones are stopped
 * with release().
 */
export class WorkerPool {
  private workers: Worker[];
  constructor(n: number) {
    // unref'd while idle: a pool that is never used cannot keep the process alive
    this.workers = Array.from({ length: Math.max(0, n) }, () => {
      const w = makeWorker();
      w.unref();
      return w;
    });
  }
  take(n: number): Worker[] {
    const got = this.workers.slice(0, n);
    this.workers = this.workers.slice(n);
    for (const w of got) w.ref();
    while (got.length < n) got.push(makeWorker());
    return got;
  }
  release(): void {
    for (const w of this.workers) void w.terminate();
    this.workers = [];
  }
}

export function startAnalysis(plan: Plan, jobs: number, onProgress?: (done: number, total: number) => void, opts: { failForTest?: boolean; variants?: Variant[]; ideal?: boolean; pool?: WorkerPool; ring?: boolean; band?: boolean } = {}): AnalysisJob {
  const beams = plan.beams.count;
  const frequencies = plan.frequenciesHz.length;
  const total = beams * frequencies * (opts.variants?.length ?? 1);
  const shared: SharedAnalysis = {
    counter: new Int32Array(new SharedArrayBuffer(4)),
    metrics: new Float64Array(new SharedArrayBuffer(total * METRICS * 8)),
    beams,
    frequencies,
    variants: opts.variants ?? null,
    ideal: opts.ideal ?? true,
    ring: opts.ring && !opts.variants ? allocRing(4 * Math.max(1, jobs), plan.elements.count) : null,
    squint: opts.band && plan.band && !opts.variants ? new Float64Array(new SharedArrayBuffer(beams * frequencies * plan.band.frequenciesHz.length * SQUINT_METRICS * 8)) : null,
  };
  const nWorkers = Math.max(0, Math.min(jobs - 1, chunkCount(shared) - 1));
  let done = 0;
  const tick = (n: number) => {
    done += n;
    onProgress?.(done, total);
  };
  const pool = opts.pool ?? new WorkerPool(0);
  const workers = pool.take(nWorkers);
  pool.release();
  for (const w of workers) w.postMessage({ plan, shared, failForTest: !!opts.failForTest });
  const exits = workers.map(
    (w) =>
      new Promise<void>((resolve, reject) => {
        let ok = false;
        w.on("message", (m: { progress?: number; done?: number; error?: string }) => {
          if (m.progress) tick(m.progress);
          if (m.error !== undefined) reject(new Error(`analysis worker failed: ${m.error}`));
          if (m.done !== undefined) {
            ok = true;
            resolve();
          }
        });
        w.on("error", reject);
        w.on("exit", (code) => (ok ? resolve() : reject(new Error(`analysis worker stopped (exit ${code})`))));
      }),
  );
  // a failure is reported by finish(); keep Node from flagging it as unhandled meanwhile
  const all = Promise.all(exits);
  let failure: unknown = null;
  all.catch((e: unknown) => {
    failure = e;
  });
  const helpCache: { c: AnalyzerCache | null; v?: number } = { c: null };
  return {
    ring: shared.ring,
    squint: shared.squint,
    help() {
      if (failure) throw failure;
      return drainChunks(plan, shared, tick, helpCache, 1, false);
    },
    async finish() {
      try {
        if (opts.failForTest && nWorkers === 0) throw new Error("injected analysis failure (test)");
        // the calling thread takes chunks too, a few at a time, yielding between them
        const cache = helpCache;
        while (!finished(shared)) {
          drainChunks(plan, shared, tick, cache, 2, false);
          await yieldNow();
        }
        await all;
        return shared.metrics;
      } finally {
        for (const w of workers) void w.terminate();
      }
    },
    cancel() {
      for (const w of workers) void w.terminate();
    },
  };
}
