// Helpers shared by the bench/*.js scripts: a scenario writer (invented data), timing of a
// whole process, medians and spreads.
import { spawnSync } from "node:child_process";
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { mulberry32 } from "../dist/core/quantize/randomized.js";

/**
 * Node reads every certificate named by NODE_EXTRA_CA_CERTS when it starts, before any of
 * our code runs (~38 ms a process on the CI-type machine, whose sandbox sets it to reach
 * its network proxy). steercode makes no network connection and a user's machine does not
 * normally set it, so the bench clears it for every process it starts and times; the
 * ladder measures what it would add to each Node process (nodeStartMs).
 */
export const EXTRA_CA_CERTS = process.env.NODE_EXTRA_CA_CERTS ?? null;
delete process.env.NODE_EXTRA_CA_CERTS;

export const ROOT = new URL("..", import.meta.url).pathname;
export const BIN = join(ROOT, "bin", "steercode.js");

/** The middle value (upper middle for an even count). */
export const median = (a) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)];

/** median, min and max of a sample, for "median (min–max)" in README tables. */
export const spread = (a) => ({ median: median(a), min: Math.min(...a), max: Math.max(...a), runs: a.length });

/**
 * A bench scenario in DIR/NAME/scenario.json: side×side half-wave rectangular panel at
 * 28 GHz, 6-bit phase, 6-bit 0.5 dB attenuator, Taylor −30 dB n̄ 4, a 16-bit word and
 * (withCal) an invented calibration file of uniform phases and ±1 dB gains.
 */
export function benchScenario(dir, name, side, beams, outputs, withCal = true, extra = {}) {
  const d = join(dir, name);
  mkdirSync(d, { recursive: true });
  const doc = {
    format: "steercode-scenario/1",
    name: `bench ${name} (invented)`,
    frequency: "28 GHz",
    array: { lattice: { kind: "rectangular", columns: side, rows: side, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams,
    phaseShifter: { bits: 6 },
    attenuator: { bits: 6, step: "0.5 dB" },
    taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 },
    word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 6 }, { name: "atten", shift: 8, width: 6 }] },
    outputs,
    ...extra,
  };
  if (withCal) {
    const r = mulberry32(side * 7919);
    const lines = ["# invented bench calibration", "element,phase_offset_deg,gain_offset_db"];
    for (let i = 0; i < side * side; i++) lines.push(`${i},${(r() * 360 - 180).toFixed(2)},${((r() - 0.5) * 2).toFixed(3)}`);
    writeFileSync(join(d, "cal.csv"), lines.join("\n") + "\n");
    doc.calibration = "cal.csv";
  }
  const p = join(d, "scenario.json");
  writeFileSync(p, JSON.stringify(doc, null, 2));
  return p;
}

/** Wall time of one whole process (exit status 0 required). */
export function timeCmd(cmd, args, opts = {}) {
  const t = performance.now();
  const r = spawnSync(cmd, args, { encoding: "utf8", maxBuffer: 1 << 26, ...opts });
  const ms = performance.now() - t;
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(" ")} failed (${r.status}): ${r.stderr}`);
  const rss = /MAXRSS (\d+)/.exec(r.stderr ?? "");
  return { ms, stdout: r.stdout, stderr: r.stderr, maxRssKb: rss ? Number(rss[1]) : null };
}
