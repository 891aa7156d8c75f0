/**
 * Worker thread: waits for a job (the plan and the shared arrays), then prepares its
 * analyser and claims beam chunks from the shared counter (Atomics) while the tail rule
 * allows, writing metrics straight into the shared result array. The main thread
 * gives a job to workers (started with the command, or later) only when the work pays for them (analysis-pool.ts).
 */
import { parentPort } from "node:worker_threads";
import type { Plan } from "../core/plan.js";
import { drainChunks, type SharedAnalysis } from "./analysis-pool.js";

/** Wall-clock ms, comparable across threads (STEERCODE_DEBUG's timeline). */
const now = () => performance.timeOrigin + performance.now();

parentPort!.once("message", (job: { plan: Plan; shared: SharedAnalysis; self: number; failForTest: boolean }) => {
  try {
    const readyAt = now();
    let firstAt = 0;
    let busyMs = 0;
    if (job.failForTest) throw new Error("injected worker failure (test)");
    const done = drainChunks(job.plan, job.shared, {
      self: job.self,
      onProgress: (n) => parentPort!.postMessage({ progress: n }),
      onChunk: (ms) => {
        busyMs += ms;
        if (firstAt === 0) firstAt = now();
      },
    });
    parentPort!.postMessage({ done, readyAt, firstAt, busyMs });
  } catch (e) {
    parentPort!.postMessage({ error: e instanceof Error ? e.message : String(e) });
  }
});
