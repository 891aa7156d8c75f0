import type { CalibrationServed } from "../core/calibrate/per-frequency.js";
import { deriveFacts } from "../core/facts.js";
import { loadScenario } from "../io/scenario.js";
import { fmt, printJson, SAFETY, type Io } from "./shared.js";

/** "listed set (lines 5–260)" or "interpolated: 0.75 × 27 GHz set (lines …) + 0.25 × 29 GHz set (lines …)" */
export function servedText(s: CalibrationServed): string {
  if (!s.interpolated) return `the ${s.from[0]!.frequencyHz} Hz set (lines ${s.from[0]!.lines})`;
  return `interpolated: ${s.from.map((f) => `${f.weight} × the ${f.frequencyHz} Hz set (lines ${f.lines})`).join(" + ")} (gain linear in dB, phase the shorter way round)`;
}

export function checkCommand(io: Io, scenario: string): number {
  const loaded = loadScenario(scenario);
  const plan = loaded.plan;
  const f = deriveFacts(plan);
  const cal = loaded.inputs.find((i) => i.role === "calibration");
  if (io.json) {
    printJson(io, { ok: true, scenario, name: plan.name, facts: f, calibration: cal ? { ref: cal.ref, sha256: cal.file.sha256, comments: cal.comments, ...(plan.calServed ? { perFrequency: plan.calServed } : {}) } : null, warnings: f.warnings });
    return 0;
  }
  const lines: string[] = [];
  lines.push(`scenario   ${scenario}${plan.name ? `  (${plan.name})` : ""}`);
  lines.push(`elements   ${f.elements} (${f.enabledElements} enabled)${plan.lattice ? `, ${plan.lattice.kind} lattice ${plan.lattice.columns} × ${plan.lattice.rows}` : ", element list"}`);
  lines.push(`beams      ${f.beams} × ${f.frequencies} frequenc${f.frequencies === 1 ? "y" : "ies"} = ${f.words} words, ${f.tableBytes} bytes in table.bin (${plan.word.bytes} byte(s)/word)`);
  lines.push(`beam grid  scans up to θ = ${fmt(f.maxScanDeg, 1)}° from broadside`);
  lines.push(`phase      ${plan.phaseBits} bits, LSB ${fmt(f.lsbDeg, 4)}°${plan.phaseStates ? ", measured states" : ""}`);
  lines.push(`attenuator ${plan.attenBits} bits × ${plan.attenStepDb} dB = ${fmt(f.attenRangeDb, 2)} dB range${plan.attenStates ? ", measured states" : ""}`);
  lines.push(`taper      ${plan.taper.kind}${"sidelobeDb" in plan.taper ? ` ${plan.taper.sidelobeDb} dB` : ""}${"nbar" in plan.taper ? `, n̄ = ${plan.taper.nbar}` : ""}`);
  lines.push(`aperture   D = ${fmt(f.apertureM * 1000, 2)} mm (largest dimension)`);
  if (plan.element) lines.push(`element    ${plan.element.pattern === "cosine" ? `cos^${plan.element.exponent} θ power pattern` : `measured pattern table (${plan.element.thetaDeg.length} θ × ${plan.element.phiDeg.length} φ)`}`);
  if (plan.band) lines.push(`band       ${(plan.band.frequenciesHz[0]! / 1e9).toPrecision(6)} … ${(plan.band.frequenciesHz[plan.band.frequenciesHz.length - 1]! / 1e9).toPrecision(6)} GHz, ${plan.band.frequenciesHz.length} point(s)`);
  if (cal) lines.push(`calibration ${cal.ref} (sha256 ${cal.file.sha256.slice(0, 12)}…)${cal.comments.length ? `: ${cal.comments.join(" | ")}` : ""}`);
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
  if (f.warnings.length) {
    lines.push("");
    for (const w of f.warnings) lines.push(`warning: ${w}`);
  }
  lines.push("");
  lines.push(SAFETY);
  io.stdout(lines.join("\n") + "\n");
  return 0;
}
