/**
 * Beams split across worker_threads (`--jobs N`: N threads in all). Chunks of beams
 * are claimed from a shared counter (Atomics.add), so the split balances itself:
 * workers start while the main thread streams the tables, and the main thread joins
 * in once the tables are written. Metrics go straight into one shared Float64Array
 * [frequency][beam][metric] (METRICS numbers a beam: flat next to the tables). A
 * failing worker rejects the whole analysis.
 */
import { Worker } from "node:worker_threads";
import type { Plan } from "../core/plan.js";
import { METRICS } from "../core/pattern/analyze.js";
import { analyseRange, type AnalyzerCache } from "../core/pattern/run.js";

export const CHUNK_BEAMS = 8;

export interface SharedAnalysis {
  counter: Int32Array;
  metrics: Float64Array;
  beams: number;
  frequencies: number;
}

function chunkCount(s: SharedAnalysis): number {
  return s.frequencies * Math.ceil(s.beams / CHUNK_BEAMS);
}

/** Claim and compute chunks until none are left; returns the number of beams done. */
export function drainChunks(plan: Plan, s: SharedAnalysis, onProgress?: (beams: number) => void, cache: { c: AnalyzerCache | null } = { c: null }): number {
  const perF = Math.ceil(s.beams / CHUNK_BEAMS);
  const total = chunkCount(s);
  let done = 0;
  for (;;) {
    const id = Atomics.add(s.counter, 0, 1);
    if (id >= total) return done;
    const fi = Math.floor(id / perF);
    const from = (id % perF) * CHUNK_BEAMS;
    const to = Math.min(s.beams, from + CHUNK_BEAMS);
    analyseRange(plan, fi, from, to, s.metrics.subarray((fi * s.beams + from) * METRICS, (fi * s.beams + to) * METRICS), cache);
    done += to - from;
    onProgress?.(to - from);
  }
}

export interface AnalysisJob {
  /** Join in on the calling thread (after the tables), then wait for the workers. */
  finish(): Promise<Float64Array>;
  /** Stop the workers (on an error elsewhere). */
  cancel(): void;
}

function workerUrl(): { url: URL; execArgv: string[] } {
  const fromSource = import.meta.url.endsWith(".ts");
  return { url: new URL(fromSource ? "./analysis-worker.ts" : "./analysis-worker.js", import.meta.url), execArgv: fromSource ? ["--import", "tsx"] : [] };
}

export function startAnalysis(plan: Plan, jobs: number, onProgress?: (done: number, total: number) => void, opts: { failForTest?: boolean } = {}): AnalysisJob {
  const beams = plan.beams.count;
  const frequencies = plan.frequenciesHz.length;
  const total = beams * frequencies;
  const shared: SharedAnalysis = {
    counter: new Int32Array(new SharedArrayBuffer(4)),
    metrics: new Float64Array(new SharedArrayBuffer(total * METRICS * 8)),
    beams,
    frequencies,
  };
  const nWorkers = Math.max(0, Math.min(jobs - 1, chunkCount(shared) - 1));
  const { url, execArgv } = workerUrl();
  let done = 0;
  const tick = (n: number) => {
    done += n;
    onProgress?.(done, total);
  };
  const workers = Array.from({ length: nWorkers }, () => new Worker(url, { workerData: { plan, shared, failForTest: !!opts.failForTest }, execArgv }));
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
  all.catch(() => {});
  return {
    async finish() {
      try {
        if (opts.failForTest && nWorkers === 0) throw new Error("injected analysis failure (test)");
        drainChunks(plan, shared, tick);
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
