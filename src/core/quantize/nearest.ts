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

/** Nearest codes of every element (ψ/LSB rounded, ties up, mod 2^B); a value within EDGE of a boundary gets −1 (left for the exact decision), and the result says whether any did. */
function phaseCodes(prep: FrequencyPrep, n: number, u: number, v: number, w: number, pc: Int32Array, mask: number): boolean {
  const { X, Y, Z, C } = prep;
  let edge = false;
  for (let i = 0; i < n; i++) {
    const t = X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!;
    const r = t + 0.5;
    const fl = Math.floor(r);
    const frac = r - fl;
    if (frac < EDGE || frac > 1 - EDGE) {
      pc[i] = -1;
      edge = true;
    } else pc[i] = fl & mask;
  }
  return edge;
}

/** The commanded phase ψ of every element (degrees). */
function commandedPhases(prep: FrequencyPrep, n: number, u: number, v: number, w: number, pd: Float64Array, states: number, lsbDeg: number): void {
  const { X, Y, Z, C } = prep;
  for (let i = 0; i < n; i++) pd[i] = commandedDeg(X[i]! * u + Y[i]! * v + Z[i]! * w + C[i]!, states, lsbDeg);
}

export function nearestQuantizer(plan: Plan, fi: number, prep: FrequencyPrep = prepareFrequency(plan, fi), commanded = true): Quantizer {
  const { states, lsbDeg } = prep;
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
      // each loop a function of its own: V8 compiles a long loop on the stack (OSR) before the
      // code after it has run, and such code after the loop bailed out at every beam
      // (64×64: "insufficient type feedback for call", 441 times in a 441-beam build)
      if (phaseCodes(prep, n, u, v, w, out.phaseCode, mask)) {
        // a value within EDGE of a code boundary: that element re-decided exactly
        const pc = out.phaseCode;
        for (let i = 0; i < n; i++) if (pc[i] === -1) pc[i] = exactPhaseCode(plan, fi, i, exact.get(b));
      }
      if (commanded) commandedPhases(prep, n, u, v, w, out.phaseDeg, states, lsbDeg);
      fillCommon(prep, out);
    },
  };
}

export { allocBeamCodes };
