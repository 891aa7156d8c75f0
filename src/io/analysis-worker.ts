/** Worker thread: receives the plan once, then beam ranges; answers with metric blocks (transferred). */
import { parentPort, workerData } from "node:worker_threads";
import type { Plan } from "../core/plan.js";
import { METRICS } from "../core/pattern/analyze.js";
import { analyseRange, type AnalyzerCache } from "../core/pattern/run.js";

const plan = (workerData as { plan: Plan }).plan;
const cache: { c: AnalyzerCache | null } = { c: null };
parentPort!.on("message", (msg: { id: number; fi: number; from: number; to: number }) => {
  try {
    if ((workerData as { failForTest?: boolean }).failForTest) throw new Error("injected worker failure (test)");
    const out = new Float64Array((msg.to - msg.from) * METRICS);
    analyseRange(plan, msg.fi, msg.from, msg.to, out, cache);
    parentPort!.postMessage({ id: msg.id, out }, [out.buffer]);
  } catch (e) {
    parentPort!.postMessage({ id: msg.id, error: e instanceof Error ? e.message : String(e) });
  }
});
