/**
 * `randomized`: each phase is rounded down or up with probability given by its
 * distance to the two codes (up with probability frac(t)), which breaks up the
 * periodic errors behind quantisation lobes (Smith & Guo, IEEE Trans. AP-31,
 * Nov 1983). Seeded and reproducible: the stream of beam b at frequency f depends
 * only on (seed, the value of f, b) — not on f's place in the frequency list, nor on
 * how the beams are split between workers.
 */
import type { BeamCodes, Quantizer } from "./contract.js";
import { fillCommon } from "./nearest.js";
import { commandedDeg, prepareFrequency, type FrequencyPrep } from "./prepare.js";
import type { Plan } from "../plan.js";

const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);

/**
 * splitmix32-style hash of the seed, the frequency's value (its float64 bits, so
 * "28 GHz" and "28000 MHz" are one key) and the beam index into a 32-bit state.
 */
export function mixSeed(seed: number, frequencyHz: number, b: number): number {
  F64[0] = frequencyHz;
  let h = (seed ^ 0x9e3779b9) >>> 0;
  for (const x of [U32[0]!, U32[1]!, b]) {
    h = Math.imul(h ^ x, 0x85ebca6b) >>> 0;
    h ^= h >>> 13;
    h = Math.imul(h, 0xc2b2ae35) >>> 0;
    h ^= h >>> 16;
  }
  return h >>> 0;
}

/** mulberry32: small, fast, well-distributed 32-bit generator (public domain). */
export function mulberry32(state: number): () => number {
  let a = state >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function randomizedQuantizer(plan: Plan, fi: number, prep: FrequencyPrep = prepareFrequency(plan, fi)): Quantizer {
  const { X, Y, Z, C, states, lsbDeg } = prep;
  const n = plan.elements.count;
  const mask = states - 1;
  const beams = plan.beams;
  const seed = plan.quantizer.seed;
  const fHz = plan.frequenciesHz[fi]!;
  return {
    method: "randomized",
    beam(b: number, out: BeamCodes): void {
      const rnd = mulberry32(mixSeed(seed, fHz, b));
      const u = beams.u[b]!;
      const v = beams.v[b]!;
      const w = beams.w[b]!;
      for (let i = 0; i < n; i++) {
        const t = X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!;
        const fl = Math.floor(t);
        const up = rnd() < t - fl ? 1 : 0;
        out.phaseCode[i] = (fl + up) & mask;
        out.phaseDeg[i] = commandedDeg(t, states, lsbDeg);
      }
      fillCommon(prep, out);
    },
  };
}
