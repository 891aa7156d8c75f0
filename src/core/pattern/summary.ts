/** Grid-wide distributions and worst beams of the per-beam metrics. */
import { METRIC_COLUMNS, METRICS } from "./analyze.js";

export interface Distribution {
  /** null when no beam has a value (e.g. no sidelobe in visible space at all) */
  median: number | null;
  p95: number | null;
  max: number | null;
  /** index (frequency·beams + beam) of the worst value */
  worst: number;
}

/** Quantile by linear interpolation between order statistics (numpy's default "linear" method). */
export function quantile(sorted: Float64Array | number[], q: number): number {
  const n = sorted.length;
  if (!n) return NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!);
}

/** For each metric (skipping NaN): median, p95, max and where the max is. Pointing, PSL rise, gain loss and errors: larger is worse. */
export function summarise(all: Float64Array, omit: readonly string[] = []): Record<string, Distribution> {
  const n = all.length / METRICS;
  const out: Record<string, Distribution> = {};
  METRIC_COLUMNS.forEach((name, k) => {
    if (name === "peak_u" || name === "peak_v" || omit.includes(name)) return;
    const vals: number[] = [];
    let worst = -1;
    let wv = -Infinity;
    for (let i = 0; i < n; i++) {
      const v = all[i * METRICS + k]!;
      if (Number.isNaN(v)) continue;
      vals.push(v);
      if (v > wv) {
        wv = v;
        worst = i;
      }
    }
    const s = Float64Array.from(vals).sort();
    out[name] = s.length ? { median: quantile(s, 0.5), p95: quantile(s, 0.95), max: s[s.length - 1]!, worst } : { median: null, p95: null, max: null, worst: -1 };
  });
  return out;
}
