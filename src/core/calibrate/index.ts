/**
 * Calibration methods behind one contract (see contract.ts): a method turns readings
 * into channel fields; referOffsets removes the code-0 state and the probe path and
 * refers the offsets. calibrationAt (per-frequency.ts) serves cal.csv sets per frequency.
 */
import type { Plan } from "../plan.js";
import { elementStates } from "../quantize/states.js";
import type { Complex } from "./contract.js";

export * from "./contract.js";
export { revMethod, revFitElement, SUM_CHECK_MAX_UNDECIDED, revLinear, revClosedForm, type RevReadings, type RevFit, type RevRoot, type RevElementData } from "./rev.js";
export { fieldMethod, type FieldElementData } from "./field.js";
export { calibrationAt, type CalibrationTable, type CalibrationServed } from "./per-frequency.js";

export const METHODS = {
  rev: "rotating-element electric-field-vector method (Mano & Katagi, 1982)",
  field: "each channel's complex response measured alone",
} as const;
export type MethodName = keyof typeof METHODS;

/** Realized states of one element from the plan (ideal or measured): what REV needs and the code-0/0 factor. */
export interface ElementCodeModel {
  /** phase of code k minus phase of code 0 (rad) */
  delta: (code: number) => number;
  /** amplitude of code k relative to code 0 */
  rho: (code: number) => number;
  /** realized factor of phase code 0 with attenuation code 0 */
  codeZero: Complex;
}

export function elementCodeModel(plan: Plan, index: number): ElementCodeModel {
  const s = elementStates(plan, index);
  const p0 = s.pAng[0]!, m0 = s.pMag[0]!;
  const ang = p0 + s.qAng[0]!, mag = m0 * s.qMag[0]!;
  return {
    delta: (k) => s.pAng[k]! - p0,
    rho: (k) => s.pMag[k]! / m0,
    codeZero: { re: mag * Math.cos(ang), im: mag * Math.sin(ang) },
  };
}
