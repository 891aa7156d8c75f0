/** Analyse a range of beams of one frequency: codes (same quantizer as the tables) → metrics. */
import type { Plan } from "../plan.js";
import { allocBeamCodes, makeQuantizer, type BeamCodes, type Quantizer } from "../quantize/index.js";
import { BeamAnalyzer, METRICS } from "./analyze.js";

export interface AnalyzerCache {
  fi: number;
  analyzer: BeamAnalyzer;
  quantizer: ReturnType<typeof makeQuantizer>;
}

/** `onCodes` sees each beam's codes (and its quantizer) after the quantizer ran: the build passes optimized codes on to the tables. */
export function analyseRange(plan: Plan, fi: number, from: number, to: number, out: Float64Array, cache: { c: AnalyzerCache | null }, ideal = true, onCodes?: (b: number, codes: BeamCodes, q: Quantizer) => void): void {
  if (!cache.c || cache.c.fi !== fi) {
    const analyzer = new BeamAnalyzer(plan, fi);
    cache.c = { fi, analyzer, quantizer: makeQuantizer(plan, fi, analyzer.prep) };
  }
  const { analyzer, quantizer } = cache.c;
  const codes = allocBeamCodes(plan.elements.count);
  for (let b = from; b < to; b++) {
    quantizer.beam(b, codes);
    onCodes?.(b, codes, quantizer);
    analyzer.analyse(b, codes, out, (b - from) * METRICS, { ideal });
  }
}
