/**
 * The analysis pool's thread decision (analysis-pool.ts): when the workers start
 * (workersPay), when a worker takes a chunk (the tail rule), and that who computes a
 * chunk never changes a number (two claimants interleaved on one thread against one).
 */
import { describe, expect, it } from "vitest";
import { addChunk, chunkCount, drainChunks, FLAT_CHUNKS, FLAT_MS, newTiming, sharedAnalysis, SPAWN_MARGIN, WARMUP_BOUND, WORKER_START_MS, workersPay, worthClaiming, type ChunkCache } from "../../src/io/analysis-pool.js";
import { baseScenario, load } from "../helpers.js";

/** Timing of `chunks` chunks of 8 beams at `perBeam` ms (after one at `first` ms a beam), set-up `setup` ms. */
function timed(chunks: number, perBeam: number, setup = 0, first = perBeam) {
  const t = newTiming();
  for (let k = 0; k < chunks; k++) addChunk(t, 8 * (k === 0 ? first : perBeam), 8, k === 0 ? setup : 0);
  return t;
}

describe("workersPay: start the workers only when the work left pays for them", () => {
  it("never before two chunks are timed, nor with nothing left", () => {
    expect(workersPay(timed(1, 10), 1e6)).toBe(false);
    expect(workersPay(timed(8, 10), 0)).toBe(false);
  });

  it("once the cost a beam is flat: beams left × cost against SPAWN_MARGIN × (start-up + set-up + warm-up)", () => {
    // derived (the rule's model): 40 flat chunks at 1 ms a beam (312 ms ≥ FLAT_MS without a new low),
    // no warm-up beyond it, 50 ms set-up: a worker costs S = WORKER_START_MS + 50 ms and pays from
    // SPAWN_MARGIN·S ms of work left
    const t = timed(40, 1, 50);
    expect(t.msSinceNewLow).toBeGreaterThanOrEqual(FLAT_MS);
    const edge = SPAWN_MARGIN * (WORKER_START_MS + 50);
    expect(workersPay(t, edge + 1)).toBe(true);
    expect(workersPay(t, edge - 1)).toBe(false);
  });

  it("counts the main thread's warm-up as the worker's too", () => {
    // derived: a first chunk at 30 ms a beam, then 1 ms: 8·29 = 232 ms of warm-up a cold worker also pays
    const t = timed(40, 1, 0, 30);
    const edge = SPAWN_MARGIN * (WORKER_START_MS + 8 * 29);
    expect(workersPay(t, edge + 1)).toBe(true);
    expect(workersPay(t, edge - 1)).toBe(false);
  });

  it("while the cost a beam still falls, takes the warm cost as WARMUP_BOUND times lower", () => {
    const t = newTiming();
    for (const per of [40, 20, 10]) addChunk(t, 8 * per, 8, 0);
    expect(t.sinceNewLow).toBe(0);
    // derived: c = 10 / WARMUP_BOUND a beam; warm-up = busy − beams·c
    const c = 10 / WARMUP_BOUND;
    const edge = (SPAWN_MARGIN * (WORKER_START_MS + 8 * (40 + 20 + 10) - 24 * c)) / c;
    expect(workersPay(t, edge * 1.001)).toBe(true);
    expect(workersPay(t, edge * 0.999)).toBe(false);
  });

  it("takes the cost as flat after four chunks without a new low by a fifth (noise only makes chunks slower)", () => {
    const t = newTiming();
    for (const per of [40, 10, 9, 12, 30, 8.5]) addChunk(t, 8 * per, 8, 0);
    // 9 and 8.5 are not a fifth below 10: four chunks since the low of 10
    expect(t.sinceNewLow).toBe(4);
    expect(t.msSinceNewLow).toBe(8 * (9 + 12 + 30 + 8.5));
    expect(t.minPerBeamMs).toBe(8.5);
  });

  it("does not take a cold plateau for the warm cost: flat needs FLAT_MS without a new low, not only FLAT_CHUNKS chunks", () => {
    // the first chunks of a 16×16 build, ms a beam (STEERCODE_DEBUG trace, 2026-12-02): cold code sits
    // near 1.4–2.2 ms a beam until the optimizing compiler delivers, then 0.15–0.2 ms
    const t = newTiming();
    for (const per of [2.9, 1.9, 1.38, 1.6, 1.5, 1.7, 1.45]) addChunk(t, 8 * per, 8, 0);
    expect(t.sinceNewLow).toBeGreaterThanOrEqual(FLAT_CHUNKS);
    expect(t.msSinceNewLow).toBeLessThan(FLAT_MS);
    // 4000 beams left at the plateau's 1.38 ms would be 5.5 s of work and start a worker; at
    // 1.38 / WARMUP_BOUND a beam they are 276 ms, below SPAWN_MARGIN · WORKER_START_MS
    expect(workersPay(t, 4000)).toBe(false);
    // once the warm cost has held for FLAT_MS, it is taken as it is: 4000 beams at 0.16 ms
    for (let k = 0; k < 200; k++) addChunk(t, 8 * (k === 0 ? 0.16 : 0.17), 8, 0);
    expect(t.minPerBeamMs).toBe(0.16);
    expect(workersPay(t, 4000)).toBe(false);
    expect(workersPay(t, 40000)).toBe(true);
  });
});

describe("the tail rule: a worker takes a chunk only if it would finish it before the others finish the rest", () => {
  const times = (first: number, ...perThread: number[]) => ({ times: Float64Array.from([first, ...perThread]) });
  it("against the main thread's chunk time", () => {
    // derived: main 10 ms a chunk, the worker 50 ms: with 5 chunks left the main thread alone is done in 50 ms
    expect(worthClaiming(times(80, 10, 50), 6, 1)).toBe(true);
    expect(worthClaiming(times(80, 10, 50), 5, 1)).toBe(false);
  });
  it("a worker with no chunk yet counts the main thread's first (cold) chunk; with no timing at all it claims", () => {
    expect(worthClaiming(times(80, 10, 0), 9, 1)).toBe(true);
    expect(worthClaiming(times(80, 10, 0), 8, 1)).toBe(false);
    expect(worthClaiming(times(0, 0, 0), 1, 1)).toBe(true);
  });
  it("adds up the other threads' rates", () => {
    // derived: main and worker 2 at 10 ms a chunk: 4 chunks take them 20 ms; worker 1 needs 25
    expect(worthClaiming(times(80, 10, 25, 10), 4, 1)).toBe(false);
    expect(worthClaiming(times(80, 10, 25, 10), 6, 1)).toBe(true);
  });
});

describe("who computes a chunk changes no number", () => {
  it("two claimants interleaved (main thread and a worker's role, frequencies and sweep variants crossed) give the metrics of one", () => {
    const L = load(baseScenario({
      frequency: ["9.5 GHz", "10.5 GHz"],
      array: { lattice: { kind: "rectangular", columns: 6, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "uv", u: { from: -0.5, to: 0.5, step: 0.1 }, v: { from: 0, to: 0.2, step: 0.2 } },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
    }));
    const plan = L.plan;
    const variants = [3, 5].map((b) => ({ phaseBits: b, attenBits: plan.attenBits, attenStepDb: plan.attenStepDb, attenStepExact: plan.attenStepExact, quantizer: plan.quantizer }));
    const one = sharedAnalysis(plan, 1, { variants });
    expect(drainChunks(plan, one)).toBe(2 * 2 * 22);
    const two = sharedAnalysis(plan, 2, { variants });
    const caches: ChunkCache[] = [{ c: null }, { c: null }];
    let byMain = 0, byWorker = 0;
    // a worker's chunks may take longer: it claims while the tail rule allows, the main thread takes the rest
    for (let round = 0; round < 100; round++) {
      const a = drainChunks(plan, two, { self: 0, cache: caches[0]!, limit: 1, wait: false });
      const b = drainChunks(plan, two, { self: 1, cache: caches[1]!, limit: round % 3 === 0 ? 2 : 1, wait: false });
      byMain += a;
      byWorker += b;
      if (!a && !b) break;
    }
    expect(byMain + byWorker).toBe(88);
    expect(byWorker).toBeGreaterThan(0);
    expect(Atomics.load(two.completed, 0)).toBe(chunkCount(two));
    expect(Buffer.from(two.metrics.buffer).equals(Buffer.from(one.metrics.buffer))).toBe(true);
  });
});
