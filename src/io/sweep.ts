/** `steercode sweep`: the whole grid for every (phase bits, attenuator step, quantizer). */
import type { QuantizerMethod } from "../core/plan.js";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { stringify } from "csv-stringify/sync";
import { InputError } from "../core/errors.js";
import { METRICS } from "../core/pattern/analyze.js";
import { BeamAnalyzer } from "../core/pattern/analyze.js";
import { MAX_ANALYSED_BEAMS } from "../core/pattern/grid.js";
import { attenBitsFor, SWEEP_COLUMNS, sweepRow, type SweepRow, type SweepVariantSpec } from "../core/sweep.js";
import { planForPart, theoryFor, type TheoryValue } from "../core/theory.js";
import { refuseOversizedAnalysis, startAnalysis } from "./analysis-pool.js";
import { stableJson } from "./build.js";
import { sha256 } from "./files.js";
import { fixed } from "./format.js";
import { StagedDir } from "./outdir.js";
import type { LoadedScenario } from "./scenario.js";
import { chartSvg, MARKERS, PALETTE, type Panel, type Series } from "./svg.js";
import { toolVersion } from "./version.js";
import { setImmediate as yieldNow } from "node:timers/promises";

export interface SweepOptions {
  phaseBits: number[];
  attenStepsDb: { value: number; exact: string }[];
  quantizers: QuantizerMethod[];
  jobs: number;
  onProgress?: (done: number, total: number) => void;
}

/** Most attenuator bits of a swept part: the scenario's own limit (schema: attenuator/bits ≤ 10). */
export const MAX_ATTEN_BITS = 10;

export interface SweepResult {
  rows: SweepRow[];
  dir: string;
}

export function sweepVariants(loaded: LoadedScenario, o: SweepOptions): SweepVariantSpec[] {
  const plan = loaded.plan;
  const rangeDb = (2 ** plan.attenBits - 1) * plan.attenStepDb;
  if ((plan.phaseStates || plan.attenStates) && (o.phaseBits.some((b) => b !== plan.phaseBits) || o.quantizers.includes("randomized")))
    throw new InputError({ file: loaded.scenario.name, pointer: "/phaseShifter/states", message: `measured state tables fix the part: sweep only its own ${plan.phaseBits} phase bits with the nearest or optimized quantizer, or remove the state tables to compare ideal parts` });
  // a step the attenuator's range cannot hold in 10 bits (a scenario's attenuator has at most 10): 1e-300 dB swept
  // a "1002-bit" part whose step sweep.csv printed as 0.000000, and two such steps shared one curve in sweep.svg
  if (plan.attenBits > 0)
    for (const s of o.attenStepsDb) {
      const bits = attenBitsFor(rangeDb, s.value);
      if (bits > MAX_ATTEN_BITS)
        throw new InputError({ message: `--atten-step: ${s.exact} dB over the attenuator's ${rangeDb} dB range needs a ${bits}-bit attenuator; expected a step that needs at most ${MAX_ATTEN_BITS} bits, as a scenario's attenuator (at least ${rangeDb} / ${2 ** MAX_ATTEN_BITS - 1} ≈ ${(rangeDb / (2 ** MAX_ATTEN_BITS - 1)).toPrecision(3)} dB here)` });
    }
  const out: SweepVariantSpec[] = [];
  for (const q of o.quantizers)
    for (const s of o.attenStepsDb)
      for (const b of o.phaseBits) out.push({ phaseBits: b, attenStepDb: s.value, attenStepExact: s.exact, attenBits: plan.attenBits === 0 ? 0 : attenBitsFor(rangeDb, s.value), quantizer: q });
  // every part analyses the whole grid into one shared array (11 doubles a beam): 72 parts × 1 M beams ran for hours towards 6.6 GB
  const analyses = out.length * plan.frequenciesHz.length * plan.beams.count;
  if (analyses > MAX_ANALYSED_BEAMS)
    throw new InputError({ file: loaded.scenario.name, pointer: "/beams", message: `the sweep would analyse ${out.length} part(s) × ${plan.frequenciesHz.length} frequenc${plan.frequenciesHz.length === 1 ? "y" : "ies"} × ${plan.beams.count} beams = ${analyses} beams; expected at most ${MAX_ANALYSED_BEAMS}: sweep fewer bit depths, steps or quantizers, or a coarser beam grid` });
  return out;
}

export async function runSweep(loaded: LoadedScenario, outDir: string, o: SweepOptions): Promise<SweepResult> {
  const plan = loaded.plan;
  const variants = sweepVariants(loaded, o);
  refuseOversizedAnalysis(plan, loaded.scenario.name, { band: false });
  const stage = new StagedDir(outDir, "sweep");
  const nb = plan.beams.count, nf = plan.frequenciesHz.length;
  const job = startAnalysis(plan, o.jobs, o.onProgress, {
    ideal: false,
    variants: variants.map((v) => ({ phaseBits: v.phaseBits, attenBits: v.attenBits, attenStepDb: v.attenStepDb, attenStepExact: v.attenStepExact, quantizer: { method: v.quantizer, seed: plan.quantizer.seed, ...(v.quantizer === "optimized" && plan.quantizer.maxGainLossDb !== undefined ? { maxGainLossDb: plan.quantizer.maxGainLossDb } : {}) } })),
  });
  try {
    // the analysis first, on this thread, until it has decided whether workers pay (analysis-pool.ts)
    while (!job.settled && job.help() > 0) await yieldNow();
    // the ideal pattern does not depend on the part: once per beam, here, while the workers run
    const idealPsl = new Float64Array(nf * nb);
    for (let fi = 0; fi < nf; fi++) {
      const an = new BeamAnalyzer(plan, fi);
      for (let b = 0; b < nb; b++) {
        idealPsl[fi * nb + b] = an.idealPsl(b);
        if (b % 32 === 31) await yieldNow();
      }
    }
    const metrics = await job.finish();
    const per = nf * nb * METRICS;
    const rows = variants.map((v, k) => sweepRow(plan, v, metrics.subarray(k * per, (k + 1) * per), idealPsl));
    const csvText = stringify([SWEEP_COLUMNS as unknown as string[], ...rows.map((r) => SWEEP_COLUMNS.map((c) => cell(r[c])))]);
    writeFileSync(join(stage.tmp, "sweep.csv"), csvText);
    const svg = sweepSvg(loaded, rows);
    writeFileSync(join(stage.tmp, "sweep.svg"), svg);
    // formulas and sources per quantizer: they differ (nearest: published; randomized: derived)
    const theorySources: Record<string, Record<string, { formula: string; source: string; note?: string }>> = {};
    for (const q of o.quantizers) {
      const t = theoryFor(planForPart(plan, { phaseBits: plan.phaseBits, attenBits: plan.attenBits, attenStepDb: plan.attenStepDb, attenStepExact: plan.attenStepExact, quantizer: q }));
      const src = (v: TheoryValue) => ({ formula: v.formula, source: v.source, ...(v.note ? { note: v.note } : {}) });
      theorySources[q] = {
        theory_gain_loss_db: src(t.gainLossDb),
        theory_rms_phase_error_deg: src(t.rmsPhaseErrorDeg),
        theory_quantization_lobe_db: src(t.quantizationLobeDb),
        theory_random_floor_db: src(t.randomSidelobeFloorDb),
        theory_rms_amp_error_db: src(t.rmsAmpErrorDb),
        theory_atten_gain_change_db: src(t.attenGainChangeDb),
        theory_expected_gain_loss_db: src(t.expectedGainLossDb),
      };
    }
    const doc = {
      format: "steercode-sweep/1",
      tool: { name: "steercode", version: toolVersion() },
      name: plan.name,
      scenario: { source: loaded.scenario.name.split(/[\\/]/).pop(), sha256: loaded.scenario.sha256 },
      inputs: loaded.inputs.map((i) => ({ role: i.role, ref: i.ref, sha256: i.file.sha256, comments: i.comments })),
      grid: { beams: nb, frequenciesHz: plan.frequenciesExact, elements: plan.elements.count },
      attenuatorRangeDb: (2 ** plan.attenBits - 1) * plan.attenStepDb,
      seed: o.quantizers.includes("randomized") || o.quantizers.includes("optimized") ? plan.quantizer.seed : null,
      rows: jsonRows(rows),
      theorySources,
      files: { "sweep.csv": { sha256: sha256(csvText) }, "sweep.svg": { sha256: sha256(svg) } },
    };
    writeFileSync(join(stage.tmp, "sweep.json"), stableJson(doc, null, 2) + "\n");
    stage.commit();
    return { rows, dir: outDir };
  } catch (e) {
    job.cancel();
    stage.abort();
    throw e;
  }
}

/** Rows for JSON: a value that does not exist (NaN: no sidelobe, or no estimate fits) is null. */
export function jsonRows(rows: SweepRow[]): Record<string, number | string | null>[] {
  return rows.map((r) => Object.fromEntries(Object.entries(r).map(([k, v]) => [k, typeof v === "number" && !Number.isFinite(v) ? null : v])));
}

function cell(v: number | string): string {
  if (typeof v === "string") return v;
  if (!Number.isFinite(v)) return "";
  return Number.isInteger(v) ? String(v) : fixed(v, 6);
}

/**
 * One theory curve per swept step (and quantizer), from the rows' own estimates of `column`:
 * the estimates that depend on the attenuator step (the random-error floor through its
 * rounding errors, the expected gain loss through its attenuator term) are drawn for each
 * swept step, not for the scenario's step, which the sweep may not even include.
 */
function perStepSeries(rows: SweepRow[], multiQ: boolean, column: "theory_random_floor_db" | "theory_expected_gain_loss_db", label: string, style: Pick<Series, "colour" | "dash">): Series[] {
  const keys = [...new Set(rows.map((r) => `${r.atten_step_db}|${r.quantizer}`))];
  const steps = new Set(rows.map((r) => r.atten_step_db));
  return keys
    .map((k) => {
      const [step, q] = k.split("|");
      const points = rows
        .filter((r) => `${r.atten_step_db}|${r.quantizer}` === k && Number.isFinite(Number(r[column])))
        .sort((a, b) => Number(a.phase_bits) - Number(b.phase_bits))
        .map((r) => [Number(r.phase_bits), Number(r[column])] as [number, number]);
      const tags = [...(steps.size > 1 ? [`step ${step} dB`] : []), ...(multiQ || q !== "nearest" ? [q] : [])];
      return { label: `${label}${tags.length ? `, ${tags.join(", ")}` : ""}`, points, ...style, marker: "none" as const, width: 1.4 };
    })
    .filter((s) => s.points.length);
}

const floorSeries = (rows: SweepRow[], multiQ: boolean) => perStepSeries(rows, multiQ, "theory_random_floor_db", "random-error floor σ²/(ηN) [Mailloux]", { colour: "#555555", dash: "8 3 2 3" });
/** The expected gain loss, phase term + attenuator term, beside the measured loss (which holds both). */
const expectedLossSeries = (rows: SweepRow[], multiQ: boolean) => perStepSeries(rows, multiQ, "theory_expected_gain_loss_db", "expected: phase term + attenuator term", { colour: "#222222", dash: "5 2 1 2" });

export function sweepSvg(loaded: LoadedScenario, rows: SweepRow[]): string {
  const plan = loaded.plan;
  const keys = [...new Set(rows.map((r) => `${r.atten_step_db}|${r.quantizer}`))];
  const multiQ = new Set(rows.map((r) => r.quantizer)).size > 1;
  const seriesFor = (col: keyof SweepRow, tag: string, dash?: string): Series[] =>
    keys.map((k, i) => {
      const [step, q] = k.split("|");
      const rs = rows.filter((r) => `${r.atten_step_db}|${r.quantizer}` === k).sort((a, b) => Number(a.phase_bits) - Number(b.phase_bits));
      return {
        label: `${tag}, step ${step} dB${multiQ ? `, ${q}` : ""}`,
        points: rs.map((r) => [Number(r.phase_bits), Number(r[col])] as [number, number]),
        colour: PALETTE[i % PALETTE.length]!,
        marker: MARKERS[i % MARKERS.length]!,
        ...(dash ? { dash } : q === "randomized" ? { dash: "6 3" } : q === "optimized" ? { dash: "1 3" } : {}),
      };
    });
  const bits = [...new Set(rows.map((r) => Number(r.phase_bits)))].sort((a, b) => a - b);
  const quantizers = [...new Set(rows.map((r) => String(r.quantizer)))];
  const t = (b: number, q: string) => theoryFor(planForPart(plan, { phaseBits: b, attenBits: plan.attenBits, attenStepDb: plan.attenStepDb, attenStepExact: plan.attenStepExact, quantizer: q }));
  // one curve per quantizer whose estimate exists (n/a points are left out)
  const theory = (label: string, fn: (b: number, q: string) => number | null, dash: string): Series[] =>
    quantizers
      .map((q) => ({ q, points: bits.flatMap((b) => { const v = fn(b, q); return v === null ? [] : [[b, v] as [number, number]]; }) }))
      .filter((s) => s.points.length)
      .map((s) => ({ label: `${label}${quantizers.length > 1 || s.q !== "nearest" ? `, ${s.q}` : ""}`, points: s.points, colour: "#555555", dash, marker: "none", width: 1.4 }));
  const idealPsl = Number(rows[0]?.psl_ideal_db_max);
  const panels: Panel[] = [
    {
      title: "Worst sidelobe level over the grid",
      xLabel: "phase-shifter bits",
      yLabel: "PSL, dB (worst beam)",
      series: [
        ...seriesFor("psl_db_max", "worst"),
        ...theory("quantisation lobe 2^(-2B) [Mailloux]", (b, q) => t(b, q).quantizationLobeDb.value, "2 3"),
        ...floorSeries(rows, multiQ),
        { label: "ideal taper (worst beam)", points: bits.map((b) => [b, idealPsl]), colour: "#999999", dash: "1 2", marker: "none", width: 1.2 },
      ],
    },
    { title: "Sidelobe rise from quantisation", xLabel: "phase-shifter bits", yLabel: "PSL rise, dB", series: [...seriesFor("sll_rise_db_max", "worst"), ...seriesFor("sll_rise_db_p95", "p95", "3 3")] },
    { title: "Pointing error", xLabel: "phase-shifter bits", yLabel: "degrees", series: [...seriesFor("pointing_error_deg_max", "max"), ...seriesFor("pointing_error_deg_rms", "rms", "3 3")] },
    {
      title: "Gain loss at the commanded direction",
      xLabel: "phase-shifter bits",
      yLabel: "dB (positive = loss)",
      series: [
        ...seriesFor("gain_loss_db_max", "max"),
        ...seriesFor("gain_loss_db_median", "median", "3 3"),
        ...expectedLossSeries(rows, multiQ),
        ...theory("phase term alone (nearest: sinc² [Mailloux]; randomized: sinc⁴, derived)", (b, q) => t(b, q).gainLossDb.value, "2 3"),
      ],
    },
  ];
  return chartSvg(`Bit-depth trade-off: ${plan.name || "scenario"} (${plan.elements.count} elements, ${plan.beams.count} beams)`, panels, [
    "Theory curves: Mailloux, Phased Array Antenna Handbook, ch. 7 (from memory), for nearest rounding; randomized rounding's loss is derived (sinc⁴) and it has no periodic quantisation lobe. Quantisation lobes appear only when rounding errors are periodic (no calibration spread).",
    "Expected gain loss = phase term + attenuator term (the attenuation codes' rounding and clipping, derived per step), like the measured loss; the phase term alone is drawn too.",
    "Attenuator keeps its dB range; each step gets the bits it needs. Generated by steercode sweep.",
  ]);
}
