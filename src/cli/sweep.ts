import type { QuantizerMethod } from "../core/plan.js";
import { parseQuantity } from "../core/units.js";
import { loadScenario, MAX_ATTEN_STEP_DB } from "../io/scenario.js";
import { checkTarget } from "../io/outdir.js";
import { jsonRows, runSweep } from "../io/sweep.js";
import { fmt, printJson, progress, SAFETY, type Io } from "./shared.js";
import { UsageError } from "./usage.js";
import { listOption } from "./option-values.js";

const BITS_EXPECTED = "a range like 3..8 or a list like 3,4,6";

/** "3..8" or "3,4,6" → [3, 4, …]; each 1 … 12. */
export function parseBits(text: string): number[] {
  const out = new Set<number>();
  for (const part of listOption("--phase-bits", text, BITS_EXPECTED)) {
    const m = /^(\d+)(?:\.\.(\d+))?$/.exec(part);
    if (!m) throw new UsageError(`--phase-bits: expected ${BITS_EXPECTED}, got "${text}"`);
    const a = Number(m[1]);
    const b = m[2] === undefined ? a : Number(m[2]);
    if (b < a || a < 1 || b > 12) throw new UsageError(`--phase-bits: expected bit depths from 1 to 12 in increasing order, got "${part}"`);
    for (let k = a; k <= b; k++) {
      // as in the scenario (frequencies, disabled ids, outputs): a value given twice is refused, never merged — it is likely a typo for another
      if (out.has(k)) throw new UsageError(`--phase-bits: ${k} bits is listed twice in "${text}"; expected each bit depth once`);
      out.add(k);
    }
  }
  return [...out].sort((x, y) => x - y);
}

export function parseSteps(text: string): { value: number; exact: string }[] {
  const out: { value: number; exact: string }[] = [];
  const expected = `steps in dB greater than 0 and at most ${MAX_ATTEN_STEP_DB} like 0.25,0.5,1`;
  for (const part of listOption("--atten-step", text, expected)) {
    const r = parseQuantity(/^[\d.eE+-]+$/.test(part) ? `${part} dB` : part, "level");
    if (!r.ok || !(r.q.value > 0) || !(r.q.value <= MAX_ATTEN_STEP_DB)) throw new UsageError(`--atten-step: expected ${expected}, got "${part}"`);
    const twin = out.find((s) => r.q.exact.eq(s.exact));
    if (twin) throw new UsageError(`--atten-step: ${r.q.exact.toString()} dB is listed twice in "${text}"; expected each step once`);
    out.push({ value: r.q.value, exact: r.q.exact.toString() });
  }
  return out.sort((a, b) => a.value - b.value);
}

export function parseQuantizers(text: string): QuantizerMethod[] {
  const out: QuantizerMethod[] = [];
  const expected = "one or more of nearest, randomized, optimized (comma-separated)";
  for (const part of listOption("--quantizer", text, expected)) {
    if (part !== "nearest" && part !== "randomized" && part !== "optimized") throw new UsageError(`--quantizer: expected ${expected}, got "${part}"`);
    if (out.includes(part)) throw new UsageError(`--quantizer: ${part} is listed twice in "${text}"; expected each quantizer once`);
    out.push(part);
  }
  return out;
}

export async function sweepCommand(io: Io, a: { scenario: string; out: string; phaseBits: string; attenStep: string | null; quantizer: string | null; jobs: number }): Promise<number> {
  // every option before any work; given empty ("--atten-step ''") is refused, not taken as absent
  const phaseBits = parseBits(a.phaseBits);
  const steps = a.attenStep !== null ? parseSteps(a.attenStep) : null;
  const quantizers = a.quantizer !== null ? parseQuantizers(a.quantizer) : null;
  checkTarget(a.out, "sweep");
  return sweepWith(io, a, phaseBits, steps, quantizers);
}

async function sweepWith(io: Io, a: { scenario: string; out: string; jobs: number }, phaseBits: number[], givenSteps: ReturnType<typeof parseSteps> | null, givenQuantizers: QuantizerMethod[] | null): Promise<number> {
  const loaded = loadScenario(a.scenario);
  const steps = givenSteps ?? [{ value: loaded.plan.attenStepDb, exact: loaded.plan.attenStepExact }];
  const quantizers = givenQuantizers ?? [loaded.plan.quantizer.method];
  const bar = progress(io, "sweep");
  let r;
  try {
    r = await runSweep(loaded, a.out, { phaseBits, attenStepsDb: steps, quantizers, jobs: a.jobs, onProgress: bar.update });
  } finally {
    bar.stop();
  }
  if (io.json) {
    printJson(io, { ok: true, dir: a.out, rows: jsonRows(r.rows) });
    return 0;
  }
  const lines = [
    `wrote ${a.out}: sweep.csv, sweep.json, sweep.svg (${r.rows.length} parts × ${loaded.plan.beams.count * loaded.plan.frequenciesHz.length} beams)`,
    "",
    `${"bits".padStart(4)} ${"step dB".padStart(7)} ${"q".padEnd(10)} ${"PSL max".padStart(8)} ${"rise p95".padStart(8)} ${"rise max".padStart(8)} ${"point max°".padStart(10)} ${"loss med".padStart(8)} ${"theory".padStart(7)} ${"rms φ°".padStart(7)} ${"theory".padStart(7)}`,
  ];
  // quantizers side by side: rows grouped by (step, bits), one line per quantizer
  const qOrder = (q: unknown) => quantizers.indexOf(q as QuantizerMethod);
  const shown = r.rows.map((row, i) => ({ row, i })).sort((a, b) => Number(a.row.atten_step_db) - Number(b.row.atten_step_db) || Number(a.row.phase_bits) - Number(b.row.phase_bits) || qOrder(a.row.quantizer) - qOrder(b.row.quantizer) || a.i - b.i).map((x) => x.row);
  for (const row of shown)
    lines.push(
      `${String(row.phase_bits).padStart(4)} ${String(row.atten_step_db).padStart(7)} ${String(row.quantizer).padEnd(10)} ${fmt(Number(row.psl_db_max), 2).padStart(8)} ${fmt(Number(row.sll_rise_db_p95), 2).padStart(8)} ${fmt(Number(row.sll_rise_db_max), 2).padStart(8)} ${fmt(Number(row.pointing_error_deg_max), 4).padStart(10)} ${fmt(Number(row.gain_loss_db_median), 3).padStart(8)} ${fmt(Number(row.theory_expected_gain_loss_db), 3).padStart(7)} ${fmt(Number(row.rms_phase_error_deg), 3).padStart(7)} ${fmt(Number(row.theory_rms_phase_error_deg), 3).padStart(7)}`,
    );
  lines.push("");
  // the measured loss holds the attenuator's rounding and clipping too, so the theory beside it does
  lines.push("theory beside the gain loss: phase-quantisation term + attenuator term (rounding and clipping of the attenuation codes), sweep.json theory_expected_gain_loss_db; sweep.csv theory_gain_loss_db is the phase term alone");
  const qs = new Set(r.rows.map((row) => String(row.quantizer)));
  if (qs.has("nearest")) lines.push("theory, nearest: gain loss −10·log10([sin(π/2^B)/(π/2^B)]²) and quantisation lobe 10·log10(2^(−2B)) = −6.0206·B dB: Mailloux ch. 7 (from memory); rms LSB/√12: common practice");
  if (qs.has("randomized")) lines.push("theory, randomized: gain loss −10·log10([sin(π/2^B)/(π/2^B)]⁴) and rms LSB/√6: derived for stochastic rounding (README); no periodic quantisation lobe");
  if (qs.has("optimized")) lines.push("theory, optimized: n/a (it moves codes per beam on purpose, so no rounding estimate describes them; compare its rows with nearest's)");
  if (loaded.plan.phaseStates || loaded.plan.attenStates) lines.push("theory: n/a with measured state tables (the nearest-weight search over measured states has no uniform-step estimate)");
  const neg = r.rows.filter((row) => Number(row.gain_loss_db_median) < 0);
  if (neg.length) {
    const clipped = neg.some((row) => Number(row.clipped_elements) > 0);
    lines.push(`note: the median gain loss is negative for ${neg.length} part(s): gain loss is referred to the tapered ideal${clipped ? ", and clipped elements (more attenuation needed than the attenuator's range) run louder than the taper asks; the same clipping raises the rms amplitude error (sweep.json: theory_atten_gain_change_db, theory_rms_amp_error_db, clipped_elements)" : ""}`);
  }
  lines.push("", SAFETY);
  io.stdout(lines.join("\n") + "\n");
  return 0;
}
