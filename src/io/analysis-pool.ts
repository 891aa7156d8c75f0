/**
 * Beams split across worker_threads (`--jobs N`). Every chunk is queued up front, so
 * workers compute while the main thread streams the tables. Results land in one
 * Float64Array [frequency][beam][metric] (METRICS numbers a beam: flat next to the
 * tables themselves). A failing worker rejects the whole analysis.
 */
import { Worker } from "node:worker_threads";
import type { Plan } from "../core/plan.js";
import { METRICS } from "../core/pattern/analyze.js";
import { analyseRange, type AnalyzerCache } from "../core/pattern/run.js";

export interface AnalysisJob {
  result: Promise<Float64Array>;
}

const CHUNK_BEAMS = 16;

function workerUrl(): { url: URL; execArgv: string[] } {
  const fromSource = import.meta.url.endsWith(".ts");
  return { url: new URL(fromSource ? "./analysis-worker.ts" : "./analysis-worker.js", import.meta.url), execArgv: fromSource ? ["--import", "tsx"] : [] };
}

export function startAnalysis(plan: Plan, jobs: number, onProgress?: (done: number, total: number) => void, opts: { failForTest?: boolean } = {}): AnalysisJob {
  const nb = plan.beams.count;
  const nf = plan.frequenciesHz.length;
  const total = nb * nf;
  const all = new Float64Array(total * METRICS);
  if (jobs <= 1) {
    const result = (async () => {
      const cache: { c: AnalyzerCache | null } = { c: null };
      let done = 0;
      for (let fi = 0; fi < nf; fi++)
        for (let from = 0; from < nb; from += CHUNK_BEAMS) {
          const to = Math.min(nb, from + CHUNK_BEAMS);
          const out = all.subarray((fi * nb + from) * METRICS, (fi * nb + to) * METRICS);
          if (opts.failForTest) throw new Error("injected analysis failure (test)");
          analyseRange(plan, fi, from, to, out, cache);
          done += to - from;
          onProgress?.(done, total);
        }
      return all;
    })();
    return { result };
  }
  const chunks: { fi: number; from: number; to: number }[] = [];
  for (let fi = 0; fi < nf; fi++) for (let from = 0; from < nb; from += CHUNK_BEAMS) chunks.push({ fi, from, to: Math.min(nb, from + CHUNK_BEAMS) });
  const n = Math.min(jobs, chunks.length);
  const { url, execArgv } = workerUrl();
  const workers = Array.from({ length: n }, () => new Worker(url, { workerData: { plan, failForTest: !!opts.failForTest }, execArgv }));
  const result = new Promise<Float64Array>((resolve, reject) => {
    let remaining = chunks.length;
    let done = 0;
    let failed = false;
    const finish = (err?: Error) => {
      for (const w of workers) void w.terminate();
      if (err) reject(err);
      else resolve(all);
    };
    workers.forEach((w) => {
      w.on("message", (m: { id: number; out?: Float64Array; error?: string }) => {
        if (failed) return;
        if (m.error !== undefined || !m.out) {
          failed = true;
          finish(new Error(`analysis worker failed: ${m.error}`));
          return;
        }
        const c = chunks[m.id]!;
        all.set(m.out, (c.fi * nb + c.from) * METRICS);
        done += c.to - c.from;
        onProgress?.(done, total);
        if (--remaining === 0) finish();
      });
      w.on("error", (e) => {
        if (!failed) {
          failed = true;
          finish(e);
        }
      });
    });
    // contiguous blocks per worker keep each worker's frequency set-up cached
    chunks.forEach((c, id) => workers[Math.floor((id * n) / chunks.length)]!.postMessage({ id, ...c }));
  });
  return { result };
}
