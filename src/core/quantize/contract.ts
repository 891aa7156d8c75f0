/**
 * One contract for every quantizer. A quantizer is made per (plan, frequency) and
 * fills the codes of one beam at a time into caller-owned buffers.
 */
import type { Plan } from "../plan.js";

export interface BeamCodes {
  phaseCode: Int32Array;
  attenCode: Int32Array;
  /** ψ_n = wrap360(φ_n − c_n), the commanded phase before quantisation (deg). */
  phaseDeg: Float64Array;
  /** A_n, the commanded attenuation before quantisation (dB). */
  attenDb: Float64Array;
  /** Enabled elements whose attenuation hit the end of the attenuator's range. */
  clipped: number;
}

export function allocBeamCodes(n: number): BeamCodes {
  return {
    phaseCode: new Int32Array(n),
    attenCode: new Int32Array(n),
    phaseDeg: new Float64Array(n),
    attenDb: new Float64Array(n),
    clipped: 0,
  };
}

export interface Quantizer {
  readonly method: string;
  /** Fill `out` with the codes of beam `beam`. */
  beam(beam: number, out: BeamCodes): void;
}

export type QuantizerFactory = (plan: Plan, frequencyIndex: number) => Quantizer;
