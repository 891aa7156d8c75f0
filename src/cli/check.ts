import type { CalibrationServed } from "../core/calibrate/per-frequency.js";
import { deriveFacts } from "../core/facts.js";
import { gridShape, MAX_ANALYSIS_CELLS, MAX_DIRECT_TABLE_ENTRIES } from "../core/pattern/grid.js";
import { predictionStoppedNote, predictPulls, pullWarning } from "../core/pattern/pull.js";
import { loadScenario, MAX_FREQUENCY_HZ, MIN_FREQUENCY_HZ } from "../io/scenario.js";
import { fmt, printable, printJson, SAFETY, type Io } from "./shared.js";
import { parseQuantity } from "../core/units.js";
import { UsageError } from "./usage.js";
import { got, wholeOption } from "./option-values.js";
import { deviceFacts, type BusModel, type DeviceFact } from "../workflows/devices.js";
import type { Plan } from "../core/plan.js";

/** "listed set (lines 5–260)" or "interpolated: 0.75 × 27 GHz set (lines …) + 0.25 × 29 GHz set (lines …)" */
export function servedText(s: CalibrationServed): string {
  if (!s.interpolated) return `the ${s.from[0]!.frequencyHz} Hz set (lines ${s.from[0]!.lines})`;
  return `interpolated: ${s.from.map((f) => `${f.weight} × the ${f.frequencyHz} Hz set (lines ${f.lines})`).join(" + ")} (gain linear in dB, phase the shorter way round)`;
}

export interface BusOptions {
  clockHz: number | null;
  wordBits: number | null;
  overheadBits: number;
}

/** --bus-clock (a frequency with a unit), --bus-word-bits, --bus-overhead-bits. */
export function busOptions(clock: unknown, wordBits: unknown, overhead: unknown): BusOptions {
  let clockHz: number | null = null;
  if (clock !== undefined) {
    const q = parseQuantity(String(clock).replace(/^([0-9.eE+-]+)([a-zA-Z])/, "$1 $2"), "frequency");
    // bounded like every frequency: 1e400Hz was taken as an infinite clock ("full load 0.000 µs")
    if (!q.ok || !(q.q.value >= MIN_FREQUENCY_HZ && q.q.value <= MAX_FREQUENCY_HZ)) throw new UsageError(`--bus-clock: expected a clock frequency from 1 Hz to 1000 THz such as 10MHz, ${got(clock)}`);
    clockHz = q.q.value;
  }
  return { clockHz, wordBits: wordBits === undefined ? null : wholeOption("--bus-word-bits", wordBits, 1, 4096), overheadBits: wholeOption("--bus-overhead-bits", overhead ?? 0, 0, 4096) };
}

function busModel(plan: Plan, o: BusOptions): BusModel | null {
  return o.clockHz === null ? null : { clockHz: o.clockHz, wordBits: o.wordBits ?? plan.word.bytes * 8, overheadBits: o.overheadBits };
}

function seconds(s: number): string {
  return s >= 1 ? `${s.toPrecision(4)} s` : s >= 1e-3 ? `${(s * 1e3).toPrecision(4)} ms` : `${(s * 1e6).toPrecision(4)} µs`;
}

/** One line per run of consecutive devices with the same figures. */
function deviceLines(facts: DeviceFact[], bus: BusModel | null): string[] {
  const lines: string[] = [];
  let i = 0;
  while (i < facts.length) {
    const f = facts[i]!;
    let j = i;
    while (j + 1 < facts.length && facts[j + 1]!.channelsUsed === f.channelsUsed && facts[j + 1]!.words === f.words && facts[j + 1]!.id === facts[j]!.id + 1) j++;
    const ids = j > i ? `devices ${f.id}–${facts[j]!.id}` : `device ${f.id}`;
    lines.push(`  ${ids.padEnd(16)} ${f.channelsUsed} channel(s) used, ${f.addressesUsed} addresses used, image ${f.words} words = ${f.bytes} bytes${bus ? `, full load ${seconds(f.loadSeconds!)}` : ""}${j > i ? " each" : ""}`);
    i = j + 1;
  }
  return lines;
}

export function checkCommand(io: Io, scenario: string, bus: BusOptions = { clockHz: null, wordBits: null, overheadBits: 0 }): number {
  const loaded = loadScenario(scenario);
  const plan = loaded.plan;
  const f = deriveFacts(plan);
  // with an element pattern: beams whose ideal total pattern peaks outside the array's half-power main lobe
  const predicted = predictPulls(plan, (fi) => { const g = gridShape(plan, fi); return g.cells > MAX_ANALYSIS_CELLS || g.tableEntries > MAX_DIRECT_TABLE_ENTRIES; });
  const pull = pullWarning(plan, predicted.pulls, undefined, true);
  const partial = predicted.examined < predicted.total ? [predictionStoppedNote(predicted)] : [];
  const warnings = pull ? [...f.warnings, pull, ...partial] : [...f.warnings, ...partial];
  const cal = loaded.inputs.find((i) => i.role === "calibration");
  const model = busModel(plan, bus);
  const dev = deviceFacts(plan, model);
  if (io.json) {
    const devices = dev ? { channels: dev.map.spec.channels, address: { base: dev.map.spec.base, beamStride: dev.map.spec.beamStride, channelStride: dev.map.spec.channelStride }, fill: dev.map.spec.fill, source: dev.map.spec.source, bus: model, totalLoadSeconds: model ? dev.facts.reduce((a, d) => a + d.loadSeconds!, 0) : null, list: dev.facts } : null;
    printJson(io, { ok: true, scenario, name: plan.name, facts: f, calibration: cal ? { ref: cal.ref, sha256: cal.file.sha256, comments: cal.comments, ...(plan.calServed ? { perFrequency: plan.calServed } : {}) } : null, warnings, ...(dev ? { devices } : {}) });
    return 0;
  }
  const lines: string[] = [];
  lines.push(printable(`scenario   ${scenario}${plan.name ? `  (${plan.name})` : ""}`));
  lines.push(`elements   ${f.elements} (${f.enabledElements} enabled)${plan.lattice ? `, ${plan.lattice.kind} lattice ${plan.lattice.columns} × ${plan.lattice.rows}` : ", element list"}`);
  lines.push(`beams      ${f.beams} × ${f.frequencies} frequenc${f.frequencies === 1 ? "y" : "ies"} = ${f.words} words, ${f.tableBytes} bytes in table.bin (${plan.word.bytes} byte(s)/word)`);
  lines.push(`beam grid  scans up to θ = ${fmt(f.maxScanDeg, 1)}° from broadside`);
  lines.push(`phase      ${plan.phaseBits} bits, LSB ${fmt(f.lsbDeg, 4)}°${plan.phaseStates ? ", measured states" : ""}`);
  lines.push(`attenuator ${plan.attenBits} bits × ${plan.attenStepDb} dB = ${fmt(f.attenRangeDb, 2)} dB range${plan.attenStates ? ", measured states" : ""}`);
  lines.push(`taper      ${plan.taper.kind}${"sidelobeDb" in plan.taper ? ` ${plan.taper.sidelobeDb} dB` : ""}${"nbar" in plan.taper ? `, n̄ = ${plan.taper.nbar}` : ""}`);
  lines.push(`aperture   D = ${fmt(f.apertureM * 1000, 2)} mm (largest dimension)`);
  if (plan.element) lines.push(`element    ${plan.element.pattern === "cosine" ? `cos^${plan.element.exponent} θ power pattern` : `measured pattern table (${plan.element.thetaDeg.length} θ × ${plan.element.phiDeg.length} φ)`}`);
  if (plan.band) lines.push(`band       ${(plan.band.frequenciesHz[0]! / 1e9).toPrecision(6)} … ${(plan.band.frequenciesHz[plan.band.frequenciesHz.length - 1]! / 1e9).toPrecision(6)} GHz, ${plan.band.frequenciesHz.length} point(s)`);
  if (cal) lines.push(printable(`calibration ${cal.ref} (sha256 ${cal.file.sha256.slice(0, 12)}…)${cal.comments.length ? `: ${cal.comments.join(" | ")}` : ""}`));
  for (const pf of f.perFrequency) {
    lines.push("");
    lines.push(`at ${(pf.frequencyHz / 1e9).toPrecision(6)} GHz: λ = ${fmt(pf.wavelengthM * 1000, 4)} mm`);
    if (pf.dxLambda !== null) lines.push(`  spacing          dx = ${fmt(pf.dxLambda, 4)} λ, dy = ${fmt(pf.dyLambda, 4)} λ`);
    if (pf.scanLimitXDeg !== null) lines.push(`  grating-free scan ±${fmt(pf.scanLimitXDeg, 1)}° along x (az plane), ±${fmt(pf.scanLimitYDeg, 1)}° along y (el plane)`);
    lines.push(`  far field        2D²/λ = ${fmt(pf.farFieldM, 3)} m`);
    lines.push(`  G_ref            ${fmt(pf.gRefDb, 3)} dB; ${pf.clipped} element(s) clipped`);
    const sq = pf.squint;
    if (sq) {
      const ghz = (x: number) => `${(x / 1e9).toPrecision(6)} GHz`;
      lines.push(`  widest scan      beam ${sq.beam}, θ = ${fmt(sq.thetaDeg, 2)}°, φ = ${fmt(sq.phiDeg, 1)}°: 3-dB beamwidth ${fmt(sq.beamwidthDeg, 3)}° (ideal taper, scan plane)`);
      lines.push(
        `  inst. bandwidth  ${sq.bandwidthHz === null ? `no upper edge (θ ≤ half the beamwidth); lower edge ${ghz(sq.lowHz)}` : `${fmt(sq.bandwidthHz / 1e6, 1)} MHz (${fmt((100 * sq.bandwidthHz) / pf.frequencyHz, 2)} %), ${ghz(sq.lowHz)} … ${ghz(sq.highHz!)}`} for a squint of half the beamwidth (phase steering; first order 2·f0·(θ3/2)/tan θ0 = ${fmt(sq.firstOrderHz / 1e6, 1)} MHz)`,
      );
      lines.push(`  fill time        ${fmt(sq.fillTimeS * 1e12, 1)} ps across the aperture at that scan${pf.bandNeedsTrueTimeDelay === null ? "" : pf.bandNeedsTrueTimeDelay ? "; the band reaches past these edges: it asks for true time delay" : "; the band stays within these edges"}`);
    } else lines.push(`  inst. bandwidth  every beam at broadside: phase steering does not squint`);
    const served = plan.calServed?.[f.perFrequency.indexOf(pf)];
    if (served) lines.push(`  calibration      ${servedText(served)}`);
  }
  if (dev) {
    const s = dev.map.spec;
    lines.push("");
    lines.push(`devices    ${dev.facts.length} device(s) × ${s.channels} channels (${s.source === "map" ? "map file" : s.source === "elements" ? "elements.csv device/channel columns" : "default order"}); address = ${s.base} + (frequency·${plan.beams.count} + beam)·${s.beamStride} + channel·${s.channelStride}; fill ${s.fill}`);
    if (model) {
      const total = dev.facts.reduce((a, d) => a + d.loadSeconds!, 0);
      lines.push(`  bus: ${model.clockHz} Hz clock, ${model.wordBits} + ${model.overheadBits} bits a word; all images one after another ${seconds(total)}`);
    } else lines.push("  (give --bus-clock, e.g. 10MHz, for each image's full-load time)");
    lines.push(...deviceLines(dev.facts, model));
  }
  if (warnings.length) {
    lines.push("");
    for (const w of warnings) lines.push(`warning: ${w}`);
  }
  lines.push("");
  lines.push(SAFETY);
  io.stdout(lines.join("\n") + "\n");
  return 0;
}
