/**
 * Analysis workers started before the job exists. A worker thread costs ~100–200 ms
 * before it can take a chunk (a new V8 isolate, Node's bootstrap, the worker bundle);
 * started as the command begins (`build`, `verify`, `sweep` with `--jobs` > 1), that
 * start runs on the other core while the main thread loads the scenario and sets up the
 * analysis, instead of after the main thread has found that the work pays for it
 * (analysis-pool.ts, DEVELOPERS.md "Workers"). A spare holds nothing until a job takes
 * it and is unreferenced, so it never keeps the process alive; the job stops the spares
 * it does not take.
 */
import { createRequire } from "node:module";
import type { Worker } from "node:worker_threads";

/**
 * The worker: compiled JS in dist; from source (tests), a bootstrap that registers tsx
 * first. node:worker_threads is loaded here, on the first worker (~3.5 ms a start that
 * most small builds, which start none, no longer pay).
 */
export function makeWorker(): Worker {
  const { Worker } = createRequire(import.meta.url)("node:worker_threads") as typeof import("node:worker_threads");
  if (!import.meta.url.endsWith(".ts")) return new Worker(new URL("./analysis-worker.js", import.meta.url));
  const target = new URL("./analysis-worker.ts", import.meta.url).href;
  const boot = `import("tsx/esm/api").then((t) => { t.register(); return import(${JSON.stringify(target)}); });`;
  return new Worker(boot, { eval: true });
}

interface Spare {
  worker: Worker;
  /** when it was started (wall-clock ms, as the debug timeline counts) */
  startedAt: number;
  /** it stopped (an error, or its exit) before a job took it */
  gone: boolean;
}

const spares: Spare[] = [];

/** Start analysis workers now, up to `n` waiting in all. */
export function prestartWorkers(n: number): void {
  while (spares.length < n) {
    const s: Spare = { worker: makeWorker(), startedAt: performance.timeOrigin + performance.now(), gone: false };
    s.worker.unref();
    s.worker.once("error", () => (s.gone = true));
    s.worker.once("exit", () => (s.gone = true));
    spares.push(s);
  }
}

/** Started workers still waiting for a job. */
export function sparesWaiting(): number {
  return spares.filter((s) => !s.gone).length;
}

/** A started worker (referenced again: the job now holds it) with its start time, or a new one. */
export function takeWorker(): { worker: Worker; startedAt: number } {
  for (let s = spares.shift(); s; s = spares.shift()) {
    if (s.gone) continue;
    s.worker.removeAllListeners();
    s.worker.ref();
    return { worker: s.worker, startedAt: s.startedAt };
  }
  return { worker: makeWorker(), startedAt: performance.timeOrigin + performance.now() };
}

/** Stop the spares no job took. */
export function dropSpares(): void {
  for (const s of spares.splice(0)) void s.worker.terminate();
}
