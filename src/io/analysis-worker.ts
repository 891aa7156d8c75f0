/**
 * Worker thread: claims beam chunks from a shared counter (Atomics) until none are
 * left, writing metrics straight into the shared result array.
 */
import { parentPort, workerData } from "node:worker_threads";
import type { Plan } from "../core/plan.js";
import { drainChunks, type SharedAnalysis } from "./analysis-pool.js";

const { plan, shared, failForTest } = workerData as { plan: Plan; shared: SharedAnalysis; failForTest: boolean };
try {
  if (failForTest) throw new Error("injected worker failure (test)");
  const done = drainChunks(plan, shared, (n) => parentPort!.postMessage({ progress: n }));
  parentPort!.postMessage({ done });
} catch (e) {
  parentPort!.postMessage({ error: e instanceof Error ? e.message : String(e) });
}
