/** The engine's metrics for every beam of one frequency, as build computes them (one thread, no pool). */
import { BeamAnalyzer, METRICS } from "../../src/core/pattern/analyze.js";
import { allocBeamCodes, makeQuantizer } from "../../src/core/quantize/index.js";
import type { Plan } from "../../src/core/plan.js";

export function analyseAll(plan: Plan, fi = 0): Float64Array {
  const an = new BeamAnalyzer(plan, fi);
  const q = makeQuantizer(plan, fi, an.prep);
  const c = allocBeamCodes(plan.elements.count);
  const out = new Float64Array(plan.beams.count * METRICS);
  for (let b = 0; b < plan.beams.count; b++) {
    q.beam(b, c);
    an.analyse(b, c, out, b * METRICS);
  }
  return out;
}
