/**
 * `nearest`: p = round(ψ/LSB) mod 2^B with ties to the higher code; values within
 * 1e-9 LSB of a boundary are re-decided in exact decimal arithmetic.
 */
import { allocBeamCodes, type BeamCodes, type Quantizer } from "./contract.js";
import { commandedDeg, ExactDirectionCache, exactPhaseCode, prepareFrequency, type FrequencyPrep } from "./prepare.js";
import type { Plan } from "../plan.js";

const EDGE = 1e-9;

/** Shared phase pass: fills phaseDeg (ψ) and returns nothing; codes come from `round`. */
export function fillCommon(prep: FrequencyPrep, out: BeamCodes): void {
  out.attenCode.set(prep.attenCode);
  out.attenDb.set(prep.attenDb);
  out.clipped = prep.clipped;
}

export function nearestQuantizer(plan: Plan, fi: number, prep: FrequencyPrep = prepareFrequency(plan, fi), commanded = true): Quantizer {
  const { X, Y, Z, C, states, lsbDeg } = prep;
  const n = plan.elements.count;
  const mask = states - 1;
  const exact = new ExactDirectionCache(plan);
  const beams = plan.beams;
  return {
    method: "nearest",
    beam(b: number, out: BeamCodes): void {
      const u = beams.u[b]!;
      const v = beams.v[b]!;
      const w = beams.w[b]!;
      const pc = out.phaseCode;
      const pd = out.phaseDeg;
      for (let i = 0; i < n; i++) {
        const t = X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!;
        const r = t + 0.5;
        const fl = Math.floor(r);
        const frac = r - fl;
        pc[i] = frac < EDGE || frac > 1 - EDGE ? exactPhaseCode(plan, fi, i, exact.get(b)) : fl & mask;
      }
      if (commanded)
        for (let i = 0; i < n; i++) {
          pd[i] = commandedDeg(X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!, states, lsbDeg);
        }
      fillCommon(prep, out);
    },
  };
}

export { allocBeamCodes };
