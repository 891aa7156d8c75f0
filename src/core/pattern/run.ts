/** Analyse a range of beams of one frequency: codes (same quantizer as the tables) → metrics (and the band's squint). */
import { BandAnalyzer, SQUINT_METRICS } from "../band.js";
import type { Plan } from "../plan.js";
import { allocBeamCodes, makeQuantizer, type BeamCodes, type Quantizer } from "../quantize/index.js";
import { BeamAnalyzer, METRICS } from "./analyze.js";

export interface AnalyzerCache {
  fi: number;
  analyzer: BeamAnalyzer;
  quantizer: ReturnType<typeof makeQuantizer>;
  band: BandAnalyzer | null;
}

/**
 * `onCodes` sees each beam's codes (and its quantizer) after the quantizer ran: the build
 * passes optimized codes on to the tables. With `squint` (the plan has a band), the same
 * codes are played at every band frequency: band points × SQUINT_METRICS numbers a beam.
 */
export function analyseRange(plan: Plan, fi: number, from: number, to: number, out: Float64Array, cache: { c: AnalyzerCache | null }, ideal = true, onCodes?: (b: number, codes: BeamCodes, q: Quantizer) => void, squint: Float64Array | null = null): void {
  if (!cache.c || cache.c.fi !== fi) {
    const analyzer = new BeamAnalyzer(plan, fi);
    cache.c = { fi, analyzer, quantizer: makeQuantizer(plan, fi, analyzer.prep), band: squint && plan.band ? new BandAnalyzer(plan) : null };
  }
  const { analyzer, quantizer, band } = cache.c;
  const codes = allocBeamCodes(plan.elements.count);
  const per = band ? band.points * SQUINT_METRICS : 0;
  for (let b = from; b < to; b++) {
    quantizer.beam(b, codes);
    onCodes?.(b, codes, quantizer);
    analyzer.analyse(b, codes, out, (b - from) * METRICS, { ideal });
    if (band) band.analyse(b, codes, squint!, (b - from) * per);
  }
}
