/**
 * Beams split across worker_threads (`--jobs N`: at most N threads in all). Chunks of
 * beams are claimed from a shared counter (Atomics), so the split balances itself, and
 * metrics go straight into one shared Float64Array [frequency][beam][metric] (METRICS
 * numbers a beam: flat next to the tables). A failing worker rejects the whole analysis.
 *
 * How many threads: workers started with the command (`build`, `sweep`) take a job whose
 * rough work is large (EARLY_WORK_MS) at once. Otherwise the main thread starts analysing
 * at once and times its chunks; it
 * starts the workers (all N − 1 of them) only when the work left, at its measured cost
 * per beam, clearly exceeds what a worker costs before it is any use: starting a thread
 * and loading the modules (WORKER_START_MS) plus the set-up and warm-up the main thread
 * itself paid (measured). A worker prepares its set-up before it claims a chunk and
 * claims one only while it would finish it before the other threads would finish all
 * that is left (the tail rule), and the analysis ends when every chunk is written, not
 * when every worker has started: so the default `--jobs` never makes a run slower than
 * one thread. Any decision gives the same bytes (each beam is a pure function of the
 * plan and its index).
 */
import type { Worker } from "node:worker_threads";
import { setImmediate as yieldNow } from "node:timers/promises";
import type { Plan } from "../core/plan.js";
import type { CodeSource } from "../core/engine.js";
import { METRICS } from "../core/pattern/analyze.js";
import { analyseRange, type AnalyzerCache } from "../core/pattern/run.js";
import { SQUINT_METRICS } from "../core/band.js";
import { OptimizedQuantizer, OPT_FIELDS, writeReport } from "../core/quantize/optimized.js";
import { analysisSizeProblem, MAX_ANALYSED_BEAMS } from "../core/pattern/grid.js";
import { InputError } from "../core/errors.js";
import { dropSpares, sparesWaiting, takeWorker } from "./spare-workers.js";

/** A monotonic clock in ms (process.hrtime: `performance.now()` would load Node's perf_hooks, ~1.5 ms of every start). */
const msNow = (): number => {
  const [s, ns] = process.hrtime();
  return s * 1e3 + ns / 1e6;
};

/** Refuse (exit 2, before any work) an analysis whose grid would pass its stated size (grid.ts MAX_ANALYSIS_CELLS). */
export function refuseOversizedAnalysis(plan: Plan, file: string, opts: { band?: boolean } = {}): void {
  const p = analysisSizeProblem(plan, opts);
  if (p) throw new InputError({ file, pointer: p.band ? "/band" : "/frequency", message: p.message });
}

/** A build's analysis keeps every beam's metrics: refused past MAX_ANALYSED_BEAMS (frequencies × beams), before any work. */
export function refuseTooManyAnalysedBeams(plan: Plan, file: string): void {
  const n = plan.frequenciesHz.length * plan.beams.count;
  if (n > MAX_ANALYSED_BEAMS) throw new InputError({ file, pointer: "/beams", message: analysedBeamsMessage(plan) });
}

export function analysedBeamsMessage(plan: Plan): string {
  const nf = plan.frequenciesHz.length;
  return `the analysis would cover ${nf} frequenc${nf === 1 ? "y" : "ies"} × ${plan.beams.count} beams = ${nf * plan.beams.count} beams; expected at most ${MAX_ANALYSED_BEAMS} (build --no-analysis writes the tables of any allowed size)`;
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
  /** chunks claimed */
  counter: Int32Array;
  /** chunks written (the analysis is over when it reaches the chunk count) */
  completed: Int32Array;
  /** timing shared between threads (see TIME_*): the tail rule's inputs */
  times: Float64Array;
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

/**
 * What a worker costs before it does any work, besides the set-up and warm-up the main
 * thread measures on itself: starting the thread and loading the worker's modules, and
 * what that start takes from the main thread (see DEVELOPERS.md, "Workers"). Measured in
 * builds on the 2-core CI machine (STEERCODE_DEBUG's timeline): the job reaches a worker
 * 120–230 ms after its start, its first chunk is done 100–130 ms later, and meanwhile
 * the main thread's chunks run up to twice as slow (the worker's module compilation and
 * JIT share the cores): ~400 ms in all. With 100 ms here the default ran 16×16 × 4096
 * beams no faster than `--jobs 1` while burning 0.6 s more CPU.
 */
export const WORKER_START_MS = 400;
/**
 * Workers started with the command are ready about when the analysis begins. `sweep`
 * starts them as it begins; `build` once the scenario's element and beam counts are read
 * (before its calibration file) and only when the job's rough warm work (roughWork) is at
 * least this. A job at least this large takes waiting workers at once; for a smaller one
 * they are stopped, the measured decision then starting new ones if the work turns out to
 * pay. Earlier measurements (2026-12-02, against deciding by measurement alone): 16×16 ×
 * 4096 beams 1069 → 822 ms, 64×64 × 441 1290 → 944, 128×128 × 441 3324 → 2944, 64×64 ×
 * 4096 5883 → 5440. A waiting worker costs the main thread even when it is stopped (its
 * start shares the cores with the main thread's cold start), and a job taken at once
 * must be large enough to pay for two threads warming up at once. Measured on the idle
 * 2-core machine (2026-12-03, interleaved, medians of 5–9 whole builds, workers started
 * with the command / --jobs 1): rough work 75 ms (16×16 × 441) 365 / 331 ms, demo (23 ms)
 * 306 / 276, 344 ms (32×32 × 441) 542 / 519, 442 ms (16×16 × 2601) 702 / 730, 488 ms
 * (32×32 × 625) 590 / 611, 592 ms (16×16 × 3481) 827 / 946, 657 ms (32×32 × 841) 676 /
 * 750. The crossover lies between 344 and 442 ms.
 */
export const EARLY_WORK_MS = 400;
/**
 * A rough warm analysis time (ms) for `beams` beams of `elements` elements: 0.17 ms a beam
 * at 256 elements, × (N/256)^1.1 (warm costs on the ladder's 16² … 128² panels,
 * DEVELOPERS.md "Analysis speed"). It only decides whether workers start with the command
 * and take a job at once; an optimized quantizer or a band costs more, so their jobs are
 * underestimated, never over.
 */
export function roughWork(elements: number, beams: number): number {
  return beams * 0.17 * Math.pow(elements / 256, 1.1);
}
/** roughWork for the plan's elements. */
export function roughWorkMs(plan: Plan, beams: number): number {
  return roughWork(plan.elements.count, beams);
}
/** Workers start only when the work left is this many times what they cost to start. */
export const SPAWN_MARGIN = 2;
/** Chunks the main thread times before it decides (the first ones run cold). */
const DECIDE_AFTER = 2;
/**
 * A fresh thread's code is cold: its first chunks run many times slower than later ones
 * (measured on the 16² … 128² ladder: the cheaper of the first two chunks 1.1–20× the
 * warm cost). Until the main thread's cost per beam has stopped falling (no new low by a
 * fifth for FLAT_CHUNKS chunks and FLAT_MS of analysis), the warm cost is taken as its
 * lowest so far over this.
 */
export const WARMUP_BOUND = 20;
export const FLAT_CHUNKS = 4;
/**
 * Cold code runs on a plateau until V8's optimizing compiler delivers the hot loops, which
 * takes a time, not a number of chunks: on 16×16 the first ~50 beams cost 1.4–2.2 ms each
 * and the 51st 0.17 ms, so four chunks without a new low were seen while still cold (the
 * default then took a cold cost for the warm one, 9× too high, and started a worker that
 * did not pay). The cost is taken as flat only after this long without a new low.
 */
export const FLAT_MS = 200;

/** SharedAnalysis.times: the main thread's first chunk (ms after its set-up: what a cold thread's chunk takes) … */
const TIME_FIRST = 0;
/** … and, from here, per thread (0 the main thread, 1… the workers), its last chunk (ms; 0 until it has one). */
const TIME_THREAD = 1;

/** What the main thread measured on its own chunks. */
export interface MainTiming {
  /** chunks done and the beams in them */
  chunks: number;
  beams: number;
  /** time in those chunks (ms), set-up excluded */
  busyMs: number;
  /** the first analyser set-up (ms): a worker pays it too */
  setupMs: number;
  /** the lowest cost per beam of one chunk so far (ms) */
  minPerBeamMs: number;
  /** chunks since that lowest cost last fell by more than a fifth, and their time (ms) */
  sinceNewLow: number;
  msSinceNewLow: number;
}

export function newTiming(): MainTiming {
  return { chunks: 0, beams: 0, busyMs: 0, setupMs: 0, minPerBeamMs: Infinity, sinceNewLow: 0, msSinceNewLow: 0 };
}

/** Add one main-thread chunk (ms, beams, the set-up before it) to the timing. */
export function addChunk(t: MainTiming, ms: number, beams: number, setupMs: number): void {
  if (setupMs > 0 && t.setupMs === 0) t.setupMs = setupMs;
  t.chunks++;
  t.beams += beams;
  t.busyMs += ms;
  const per = ms / beams;
  const low = per < 0.8 * t.minPerBeamMs;
  t.sinceNewLow = low ? 0 : t.sinceNewLow + 1;
  t.msSinceNewLow = low ? 0 : t.msSinceNewLow + ms;
  t.minPerBeamMs = Math.min(t.minPerBeamMs, per);
}

/**
 * Whether starting the workers now pays. The work left, at the estimated warm cost c a
 * beam, is beamsLeft·c. A worker is of use only after S = WORKER_START_MS + the set-up +
 * the warm-up the main thread went through (its time beyond c per beam so far: the
 * worker's code is cold too). From then on the two share the rest, so one worker saves
 * (beamsLeft·c − S)/2 at best; they start when beamsLeft·c > SPAWN_MARGIN·S, the margin
 * covering the error of these estimates (a worker that would come too late also stops
 * itself: see the tail rule in `claim`). c is the lowest cost a beam so far once it has
 * stopped falling (FLAT_CHUNKS chunks and FLAT_MS without a new low), and that over
 * WARMUP_BOUND before.
 */
export function workersPay(t: MainTiming, beamsLeft: number, workerStartMs = WORKER_START_MS): boolean {
  if (t.chunks < DECIDE_AFTER || beamsLeft <= 0) return false;
  const c = t.sinceNewLow >= FLAT_CHUNKS && t.msSinceNewLow >= FLAT_MS ? t.minPerBeamMs : t.minPerBeamMs / WARMUP_BOUND;
  const warmup = Math.max(0, t.busyMs - t.beams * c);
  return beamsLeft * c > SPAWN_MARGIN * (workerStartMs + t.setupMs + warmup);
}

/**
 * The tail rule: thread `self` (a worker) claims a chunk only if it would finish it
 * before the other threads finish all `left` chunks without it (its chunk time against
 * left / their summed rates). A worker that has done no chunk yet counts the main
 * thread's first, cold, chunk. Timing is advisory (plain reads of shared doubles): it
 * decides who computes a chunk, never what the chunk holds.
 */
export function worthClaiming(s: Pick<SharedAnalysis, "times">, left: number, self: number): boolean {
  let rate = 0;
  for (let k = 0; k + TIME_THREAD < s.times.length; k++) {
    const t = s.times[TIME_THREAD + k]!;
    if (k !== self && t > 0) rate += 1 / t;
  }
  const mine = s.times[TIME_THREAD + self]! > 0 ? s.times[TIME_THREAD + self]! : s.times[TIME_FIRST]!;
  return !(rate > 0 && mine > 0) || mine < left / rate;
}

/** Claim the next chunk id, or -1 when none is left, (with a ring) the next one would run too far ahead of the tables, or (a worker, self > 0) the tail rule says no. */
function claim(s: SharedAnalysis, total: number, wait: boolean, self: number): number {
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
    if (self > 0 && !worthClaiming(s, total - c, self)) return -1;
    if (Atomics.compareExchange(s.counter, 0, c, c + 1) === c) return c;
  }
}

export function chunkCount(s: SharedAnalysis): number {
  return (s.variants?.length ?? 1) * s.frequencies * Math.ceil(s.beams / CHUNK_BEAMS);
}

export function variantPlan(plan: Plan, v: Variant | undefined): Plan {
  return v ? { ...plan, ...v, phaseStates: plan.phaseStates, attenStates: plan.attenStates } : plan;
}

/** A thread's analyser (one frequency of one variant at a time) and the variant plans it made. */
export interface ChunkCache {
  c: AnalyzerCache | null;
  v?: number;
  plans?: Map<number, Plan>;
}

export interface DrainOptions {
  onProgress?: (beams: number) => void;
  cache?: ChunkCache;
  /** chunks to do at most */
  limit?: number;
  /** block while the ring is full (workers); the main thread returns instead, to write tables */
  wait?: boolean;
  /** this thread's index: 0 the main thread, 1… a worker (which prepares before it claims and keeps the tail rule) */
  self?: number;
  /** after each chunk: its time and beams, and the set-up time before it (ms) */
  onChunk?: (ms: number, beams: number, setupMs: number) => void;
}

/** Where chunk `id` is: variant, frequency, first and end beam. */
function locate(s: SharedAnalysis, id: number): { v: number; fi: number; from: number; to: number } {
  const perF = Math.ceil(s.beams / CHUNK_BEAMS);
  const perV = perF * s.frequencies;
  const from = (id % perF) * CHUNK_BEAMS;
  return { v: Math.floor(id / perV), fi: Math.floor((id % perV) / perF), from, to: Math.min(s.beams, from + CHUNK_BEAMS) };
}

/** Make the cache's analyser the one chunk `id` needs (a new frequency or variant); returns the ms it took (0: it already was). */
function prepare(plan: Plan, s: SharedAnalysis, id: number, cache: ChunkCache): number {
  const { v, fi } = locate(s, id);
  if (cache.v === v && cache.c?.fi === fi) return 0;
  const t0 = msNow();
  const plans = (cache.plans ??= new Map());
  if (!plans.has(v)) plans.set(v, variantPlan(plan, s.variants?.[v]));
  if (cache.v !== v) {
    cache.c = null;
    cache.v = v;
  }
  // an empty range builds the analyser (and the band's, when there is a band) and analyses nothing
  analyseRange(plans.get(v)!, fi, 0, 0, new Float64Array(0), cache, s.ideal, undefined, s.squint ? new Float64Array(0) : null);
  return msNow() - t0;
}

/**
 * Claim and compute chunks until none are left (or `limit` chunks are done); returns the
 * number of beams done.
 */
export function drainChunks(plan: Plan, s: SharedAnalysis, o: DrainOptions = {}): number {
  const total = chunkCount(s);
  const cache = o.cache ?? { c: null };
  const self = o.self ?? 0;
  const limit = o.limit ?? Infinity;
  let done = 0;
  for (let k = 0; k < limit; k++) {
    // a worker builds its analyser before it claims: its set-up never holds up a claimed chunk
    if (self > 0) {
      const next = Atomics.load(s.counter, 0);
      if (next >= total) return done;
      prepare(plan, s, next, cache);
    }
    const id = claim(s, total, o.wait ?? true, self);
    if (id < 0) return done;
    const setupMs = prepare(plan, s, id, cache);
    const t0 = msNow();
    const { v, fi, from, to } = locate(s, id);
    const base = (v * s.frequencies + fi) * s.beams;
    const ring = s.ring;
    const slot = ring ? id % ring.slots : 0;
    const per = s.squint ? s.squint.length / (s.frequencies * s.beams) : 0;
    const squint = s.squint ? s.squint.subarray((base + from) * per, (base + to) * per) : null;
    analyseRange(cache.plans!.get(v)!, fi, from, to, s.metrics.subarray((base + from) * METRICS, (base + to) * METRICS), cache, s.ideal, ring ? (b, codes, q) => {
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
    Atomics.add(s.completed, 0, 1);
    Atomics.notify(s.completed, 0);
    const ms = msNow() - t0;
    if (self + TIME_THREAD < s.times.length) s.times[TIME_THREAD + self] = ms;
    done += to - from;
    o.onChunk?.(ms, to - from, setupMs);
    o.onProgress?.(to - from);
  }
  return done;
}

export interface AnalysisJob {
  /** Join in on the calling thread (after the tables), then wait for the chunks the workers hold. */
  finish(): Promise<Float64Array>;
  /** Stop the workers (on an error elsewhere). */
  cancel(): void;
  /** optimized builds: where the table writer takes its codes from */
  ring: CodeRing | null;
  /** The band analysis (valid after finish), null without a band. */
  readonly squint: Float64Array | null;
  /** The calling thread computes one chunk if one may be claimed now (and decides on the workers); returns the beams done. Throws a worker's failure. */
  help(): number;
  /** True once nothing is left to decide: the workers run, none may (--jobs 1), or every chunk is claimed. Until then the caller should analyse first (help()) and write tables after. */
  readonly settled: boolean;
  /** For tests: threads started and beams the workers analysed (known after finish). */
  readonly stats: { workers: number; workerBeams: number };
}

export interface StartOptions {
  failForTest?: boolean;
  variants?: Variant[];
  ideal?: boolean;
  ring?: boolean;
  band?: boolean;
  /** Tests: start the workers after this many main-thread chunks whatever the timing says (0: at once). */
  spawnAfterChunksForTest?: number;
}

/** The arrays every thread shares for one job of `threads` threads at most. */
export function sharedAnalysis(plan: Plan, threads: number, opts: Pick<StartOptions, "variants" | "ideal" | "ring" | "band"> = {}): SharedAnalysis {
  const beams = plan.beams.count;
  const frequencies = plan.frequenciesHz.length;
  const total = beams * frequencies * (opts.variants?.length ?? 1);
  return {
    counter: new Int32Array(new SharedArrayBuffer(4)),
    completed: new Int32Array(new SharedArrayBuffer(4)),
    times: new Float64Array(new SharedArrayBuffer((TIME_THREAD + threads) * 8)),
    metrics: new Float64Array(new SharedArrayBuffer(total * METRICS * 8)),
    beams,
    frequencies,
    variants: opts.variants ?? null,
    ideal: opts.ideal ?? true,
    ring: opts.ring && !opts.variants ? allocRing(4 * threads, plan.elements.count) : null,
    squint: opts.band && plan.band && !opts.variants ? new Float64Array(new SharedArrayBuffer(beams * frequencies * plan.band.frequenciesHz.length * SQUINT_METRICS * 8)) : null,
  };
}

/** Atomics.waitAsync (Node ≥ 16; not in this TypeScript lib's typings). */
const waitAsync = (Atomics as unknown as { waitAsync(a: Int32Array, i: number, v: number, ms: number): { async: boolean; value: Promise<string> | string } }).waitAsync.bind(Atomics);

export function startAnalysis(plan: Plan, jobs: number, onProgress?: (done: number, total: number) => void, opts: StartOptions = {}): AnalysisJob {
  const total = plan.beams.count * plan.frequenciesHz.length * (opts.variants?.length ?? 1);
  const shared = sharedAnalysis(plan, Math.max(1, jobs), opts);
  const chunks = chunkCount(shared);
  // no more workers than chunks the main thread would leave them
  const cap = Math.max(0, Math.min(jobs - 1, chunks - 1));
  let done = 0;
  let closed = false;
  const tick = (n: number) => {
    done += n;
    if (!closed) onProgress?.(done, total);
  };
  const workers: Worker[] = [];
  const exits: Promise<void>[] = [];
  let workerBeams = 0;
  /** STEERCODE_DEBUG's timeline: what each worker reported at its end */
  const workerLog: string[] = [];
  let failure: unknown = null;
  let failed: (e: unknown) => void = () => {};
  const failing = new Promise<never>((_, reject) => (failed = reject));
  failing.catch(() => {});
  const fail = (e: unknown) => {
    if (failure === null) failure = e;
    failed(failure);
  };
  const timing = newTiming();
  let spawned = cap === 0;
  let spawnedAfter = 0;
  const spawn = () => {
    spawned = true;
    spawnedAfter = timing.chunks;
    for (let k = 0; k < cap; k++) {
      const { worker: w, startedAt } = takeWorker();
      workers.push(w);
      w.postMessage({ plan, shared, self: k + 1, failForTest: !!opts.failForTest });
      exits.push(
        new Promise<void>((resolve) => {
          let ok = false;
          w.on("message", (m: { progress?: number; done?: number; error?: string; readyAt?: number; firstAt?: number; busyMs?: number }) => {
            if (m.progress) {
              workerBeams += m.progress;
              tick(m.progress);
            }
            if (m.error !== undefined) fail(new Error(`analysis worker failed: ${m.error}`));
            if (m.done !== undefined) {
              const at = (t: number | undefined) => (t ? `${(t - startedAt).toFixed(0)} ms` : "never");
              workerLog.push(`worker ${k + 1}: job received ${at(m.readyAt)} after its start, first chunk done ${at(m.firstAt)}, ${m.done} beams in ${(m.busyMs ?? 0).toFixed(0)} ms`);
              ok = true;
              resolve();
            }
          });
          w.on("error", fail);
          w.on("exit", (code) => {
            if (!ok && !closed) fail(new Error(`analysis worker stopped (exit ${code})`));
            resolve();
          });
        }),
      );
    }
    dropSpares();
  };
  // the fault-injection test needs its workers whatever the size; STEERCODE_SPAWN_AFTER=n (tests,
  // diagnosis) starts them after n main-thread chunks whatever the timing says
  const env = process.env.STEERCODE_SPAWN_AFTER;
  const forced = opts.failForTest ? 0 : (opts.spawnAfterChunksForTest ?? (env !== undefined && /^\d+$/.test(env) ? Number(env) : undefined));
  // workers started with the command (spare-workers.ts) have already paid their start: a
  // large enough job is theirs at once, the tail rule deciding how much of it they do; for
  // a smaller one they are stopped, and the measured decision below may start new ones
  const early = forced !== undefined || cap === 0 ? null : sparesWaiting() > 0 ? (roughWorkMs(plan, total) >= EARLY_WORK_MS ? "taken at once" : "stopped") : "none";
  if (!spawned && (forced === 0 || early === "taken at once")) spawn();
  if (spawned || forced === undefined) dropSpares();
  const onChunk = (ms: number, n: number, setupMs: number) => {
    if (timing.chunks === 0) shared.times[TIME_FIRST] = ms;
    addChunk(timing, ms, n, setupMs);
    if (spawned) return;
    const left = (chunks - Atomics.load(shared.counter, 0)) * (total / chunks);
    if (forced !== undefined ? timing.chunks >= forced && left > 0 : workersPay(timing, left)) spawn();
  };
  const cache: ChunkCache = { c: null };
  const mainDrain = (limit: number) => {
    if (failure) throw failure;
    return drainChunks(plan, shared, { onProgress: tick, cache, limit, wait: false, self: 0, onChunk });
  };
  const stop = () => {
    closed = true;
    for (const w of workers) void w.terminate();
    dropSpares();
  };
  return {
    ring: shared.ring,
    squint: shared.squint,
    get settled() {
      return spawned || Atomics.load(shared.counter, 0) >= chunks;
    },
    get stats() {
      return { workers: workers.length, workerBeams };
    },
    help() {
      return mainDrain(1);
    },
    async finish() {
      try {
        if (opts.failForTest && cap === 0) throw new Error("injected analysis failure (test)");
        // the calling thread takes chunks too, a few at a time, yielding between them
        while (Atomics.load(shared.counter, 0) < chunks) {
          mainDrain(2);
          await yieldNow();
        }
        // then waits for the chunks the workers still hold (not for workers that hold none)
        for (;;) {
          if (failure) throw failure;
          const c = Atomics.load(shared.completed, 0);
          if (c >= chunks) break;
          const w = waitAsync(shared.completed, 0, c, 100);
          if (w.async) await Promise.race([w.value, failing]);
        }
        // the fault-injection test: the injected failure must surface even when the main thread did every chunk
        if (opts.failForTest) await Promise.race([Promise.all(exits), failing]);
        if (failure) throw failure;
        // the debug timeline waits (1 s at most) for the workers' reports, sent when each has stopped claiming
        if (process.env.STEERCODE_DEBUG && workers.length) await Promise.race([Promise.all(exits), new Promise((r) => setTimeout(r, 1000).unref())]);
        if (process.env.STEERCODE_DEBUG) process.stderr.write(`steercode: debug: analysis: ${cap === 0 ? "one thread (--jobs 1 or one chunk)" : workers.length ? `${workers.length} worker(s) started after ${spawnedAfter} main-thread chunk(s), ${workerBeams} of ${total} beams analysed by them` : `no worker started (the work left never paid for one)`}${early === "none" ? `; no worker started with the command (rough work ${roughWorkMs(plan, total).toFixed(0)} ms, from ${EARLY_WORK_MS} ms)` : early ? `; the workers started with the command: ${early} (rough work ${roughWorkMs(plan, total).toFixed(0)} ms, at once from ${EARLY_WORK_MS} ms)` : ""}; main thread ${timing.chunks} chunk(s) in ${timing.busyMs.toFixed(0)} ms, lowest ${timing.minPerBeamMs.toFixed(3)} ms a beam${workerLog.map((l) => "; " + l).join("")}\n`);
        return shared.metrics;
      } finally {
        // progress messages still on their way are dropped: every beam is done
        onProgress?.(total, total);
        stop();
      }
    },
    cancel() {
      stop();
    },
  };
}
