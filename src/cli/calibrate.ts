import { runCalibrate, writeCalFile } from "../workflows/calibrate.js";
import { checkCalibrationTarget } from "../io/outdir.js";
import type { MethodName, Probe } from "../core/calibrate/index.js";
import { fmt, printJson, warn, type Io } from "./shared.js";
import { UsageError } from "./usage.js";
import { listOption } from "./option-values.js";
import { DECIMAL_RE } from "../core/units.js";
import { statSync } from "node:fs";
import { InputError } from "../core/errors.js";
import { MAX_LENGTH_M } from "../io/scenario.js";

export interface CalibrateArgs {
  scenario: string;
  data: string;
  method: string;
  probeDirection: string | null;
  probePosition: string | null;
  out: string;
}

/** `n` decimal numbers (as a quantity's number is written: not 0x10, Infinity or NaN), comma-separated. */
function numbers(raw: string, n: number, opt: string, what: string): number[] {
  const parts = listOption(opt, raw, what);
  const v = parts.map(Number);
  if (parts.length !== n || parts.some((p) => !DECIMAL_RE.test(p)) || v.some((x) => !Number.isFinite(x))) throw new UsageError(`${opt}: expected ${what}, got "${raw}"`);
  return v;
}

export function parseProbe(direction: string | null, position: string | null): Probe {
  if (direction !== null && position !== null) throw new UsageError("give --probe-direction or --probe-position, not both");
  if (position !== null) {
    const [x, y, z] = numbers(position, 3, "--probe-position", "X,Y,Z in metres (three numbers)");
    // the bound on element positions: farther out the path k·|p − r_n| loses the array in rounding (1e300 gave NaN, exit 3)
    if ([x!, y!, z!].some((c) => Math.abs(c) > MAX_LENGTH_M)) throw new UsageError(`--probe-position: expected coordinates within ±${MAX_LENGTH_M} m (10 km; farther away use --probe-direction), got "${position}"`);
    return { kind: "near", x: x!, y: y!, z: z! };
  }
  if (direction !== null) {
    const [az, el] = numbers(direction, 2, "--probe-direction", "AZ,EL in degrees (two numbers)");
    if (Math.abs(az!) > 90 || Math.abs(el!) > 90) throw new UsageError(`--probe-direction: expected |az| and |el| ≤ 90 degrees (in front of the array), got "${direction}"`);
    return { kind: "far", azDeg: az!, elDeg: el! };
  }
  return { kind: "far", azDeg: 0, elDeg: 0 };
}

function sameFile(a: string, b: string): boolean {
  try {
    const x = statSync(a), y = statSync(b);
    return x.isFile() && x.dev === y.dev && x.ino === y.ino;
  } catch {
    return false;
  }
}

export function calibrateCommand(io: Io, a: CalibrateArgs): number {
  if (a.method !== "rev" && a.method !== "field") throw new UsageError(`--method: expected rev or field, got "${a.method}"`);
  const probe = parseProbe(a.probeDirection, a.probePosition);
  // -o onto an input replaced the range readings (or the scenario) with the calibration it derived from them
  for (const [input, what] of [[a.data, "--data file (the readings)"], [a.scenario, "scenario"]] as const)
    if (sameFile(a.out, input)) throw new InputError({ file: a.out, message: `is the ${what}; writing the calibration there would replace it. Expected another -o file (e.g. cal.csv)` });
  checkCalibrationTarget(a.out); // before any work: a new file or an earlier calibration file only
  const r = runCalibrate({ scenario: a.scenario, data: a.data, method: a.method as MethodName, probe });
  const sha = writeCalFile(a.out, r.calCsv);
  if (io.json) {
    const { calCsv: _text, ...rest } = r;
    printJson(io, { ok: true, out: a.out, sha256: sha, ...rest });
    return 0;
  }
  const count = r.frequencies[0]?.elements.length ?? 0;
  const lines = [
    `wrote ${a.out} (sha256 ${sha.slice(0, 16)}…): ${count} element(s) × ${r.frequencies.length} frequenc${r.frequencies.length === 1 ? "y" : "ies"}, method ${r.method} (${r.methodName})`,
    `probe: ${r.probeText}`,
  ];
  for (const f of r.frequencies) {
    const ambiguous = f.elements.filter((e) => e.flags.includes("ambiguous-root")).length;
    const worstStd = Math.max(0, ...f.elements.map((e) => e.phaseStdDeg ?? 0));
    lines.push(
      `  ${f.frequencyHz} Hz: ${f.readings} readings` +
        (f.rmsResidualDb !== null ? `, rms fit residual ${fmt(f.rmsResidualDb, 4)} dB, largest phase uncertainty ${fmt(worstStd, 2)}° (1σ)` : "") +
        (f.fieldSum ? `, Σ element fields / whole array = ${fmt(Math.hypot(f.fieldSum.re, f.fieldSum.im), 4)} (expected 1)` : "") +
        (ambiguous ? `, ${ambiguous} root choice(s) undecided` : ""),
    );
    for (const w of f.warnings) lines.push(warn(io, `warning: ${f.frequencyHz} Hz: ${w}`));
  }
  if (r.placeholders.length) lines.push(`  no readings for disabled element(s) ${r.placeholders.join(", ")}: written as 0, 0`);
  if (r.flagged.length) {
    lines.push("");
    for (const f of r.flagged.slice(0, 20)) for (const adv of f.advice) lines.push(warn(io, `warning: ${adv}`));
    if (r.flagged.length > 20) lines.push(`… ${r.flagged.length - 20} more flagged element(s): --json lists them all`);
  }
  lines.push("", "per element (amplitude, phase, residual, both REV roots): --json");
  io.stdout(lines.join("\n") + "\n");
  return 0;
}
