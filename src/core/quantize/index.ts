/** Quantizer registry: picks the strategy for a plan (method, and measured states when given). */
import type { Plan } from "../plan.js";
import type { Quantizer } from "./contract.js";
import { nearestQuantizer } from "./nearest.js";
import { randomizedQuantizer } from "./randomized.js";
import { measuredStatesQuantizer } from "./states.js";
import { optimizedQuantizer } from "./optimized.js";
import { prepareFrequency, type FrequencyPrep } from "./prepare.js";

/** `commanded: false` skips ψ_n (phaseDeg), which only codes.csv needs. */
export function makeQuantizer(plan: Plan, fi: number, prep: FrequencyPrep = prepareFrequency(plan, fi), opts: { commanded?: boolean } = {}): Quantizer {
  if (plan.quantizer.method === "optimized") return optimizedQuantizer(plan, fi, prep, opts.commanded ?? true);
  if (plan.phaseStates || plan.attenStates) return measuredStatesQuantizer(plan, fi, prep);
  return plan.quantizer.method === "randomized" ? randomizedQuantizer(plan, fi, prep) : nearestQuantizer(plan, fi, prep, opts.commanded ?? true);
}
export { allocBeamCodes, type BeamCodes, type Quantizer } from "./contract.js";
export { OptimizedQuantizer, type OptimizeReport } from "./optimized.js";
export { prepareFrequency, type FrequencyPrep } from "./prepare.js";
