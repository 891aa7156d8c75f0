/**
 * The bad-input corpus (issue: "never take bad input"): every case must exit 2 with a
 * message that names the file and the field (JSON pointer) or the CSV line, write
 * nothing (no output folder, no staging folder), and show no stack trace.
 */
import { execFileSync } from "node:child_process";
import { existsSync, lstatSync, mkdirSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir } from "../helpers.js";
import { COMMAND_SPECS } from "../../src/cli/commands.js";

const CAL8 = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 8 }, (_, i) => `${i},0,0`).join("\n") + "\n";
const ELS = (rows: string[]) => "element,x_m,y_m\n" + rows.join("\n") + "\n";
/** element,device,channel: elements 0–3 on device 0, 4–7 on device 1 */
const DEVMAP = "element,device,channel\n" + Array.from({ length: 8 }, (_, i) => `${i},${i >> 2},${i & 3}`).join("\n") + "\n";
const line8 = Array.from({ length: 8 }, (_, i) => `${i},${(i * 0.015).toFixed(3)},0`);

interface Case {
  name: string;
  doc?: Record<string, unknown> | string;
  files?: Record<string, string | Buffer>;
  args?: (dir: string) => string[];
  /** what the message must say: the file/field/line and what was expected */
  expect: RegExp[];
  /** what it must not say (no follow-on errors from a file that was already refused) */
  notExpect?: RegExp[];
  prepare?: (dir: string) => void;
}

const B = baseScenario;
/** The shape of a build manifest, enough to reach the checks on paths (the corpus's verify cases). */
const MANIFEST = { format: "steercode-manifest/1", tool: { name: "steercode", version: "0.1.0" }, scenario: { source: "scenario.json", copy: "inputs/scenario.json", sha256: "0".repeat(64) }, analysis: false, inputs: [], files: {}, counts: { frequencies: 1, beams: 1, elements: 1, enabledElements: 1, words: 1 }, elementIds: [0], disabledIds: [], frequenciesHz: ["1"], layout: { bits: 8, bytes: 1, off: 0, fields: [{ name: "phase", shift: 0, width: 3 }] }, phaseShifter: { bits: 3 }, perFrequency: [] };

/** REV readings for the 8-element base scenario (3-bit shifter): x = 0.1·e^{j·e rad}, ideal states (derived model) */
function revRows(skip: (e: number, k: number) => boolean = () => false, elements = 8): string[] {
  const rows: string[] = [];
  for (let e = 0; e < elements; e++)
    for (let k = 0; k < 8; k++) {
      if (skip(e, k)) continue;
      const d = (k * Math.PI) / 4, xr = 0.1 * Math.cos(e), xi = 0.1 * Math.sin(e);
      const zr = 1 + xr * (Math.cos(d) - 1) - xi * Math.sin(d), zi = xr * Math.sin(d) + xi * (Math.cos(d) - 1);
      rows.push(`${e},${k},${(10 * Math.log10(zr * zr + zi * zi)).toFixed(6)}`);
    }
  return rows;
}
const REV = (rows: string[]) => "element,phase_code,power_db\n" + rows.join("\n") + "\n";
const CALIBRATE = (extra: string[] = []) => (d: string) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "cal.csv"), ...extra];
const CALF = "frequency_hz,element,phase_offset_deg,gain_offset_db\n" + ["9e9", "11e9"].flatMap((f) => Array.from({ length: 8 }, (_, i) => `${f},${i},0,0`)).join("\n") + "\n";
const cases: Case[] = [
  { name: "broken JSON", doc: '{ "format": "steercode-scenario/1", }', expect: [/scenario\.json, line 1: not valid JSON/] },
  { name: "not an object", doc: "[1, 2]", expect: [/scenario\.json: \/: expected a JSON object/] },
  { name: "wrong format", doc: B({ format: "steercode-scenario/9" }), expect: [/\/format: expected "steercode-scenario\/1"/] },
  { name: "unknown key with a did-you-mean", doc: { ...B(), frequncy: "1 GHz" }, expect: [/\/: unknown key "frequncy"; did you mean "frequency"\?/] },
  { name: "unknown lattice key", doc: B({ array: { lattice: { kind: "rectangular", colums: 8, rows: 1, dx: "1 cm", dy: "1 cm" } } }), expect: [/\/array\/lattice: unknown key "colums"; did you mean "columns"\?/] },
  { name: "frequency with a bad unit", doc: B({ frequency: "28 GHZZ" }), expect: [/\/frequency: expected a frequency.*GHz.*got "28 GHZZ"/] },
  { name: "negative frequency", doc: B({ frequency: "-28 GHz" }), expect: [/\/frequency: expected a frequency > 0/] },
  { name: "zero frequency", doc: B({ frequency: 0 }), expect: [/\/frequency: expected a frequency > 0/] },
  { name: "duplicate frequency", doc: B({ frequency: ["10 GHz", "10000 MHz"] }), expect: [/\/frequency\/1: frequency 10000000000 Hz is listed twice/] },
  { name: "zero spacing", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0 mm", dy: "5 mm" } } }), expect: [/\/array\/lattice\/dx: expected a spacing > 0/] },
  { name: "negative spacing", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 mm", dy: "-5 mm" } } }), expect: [/\/array\/lattice\/dy: expected a spacing > 0/] },
  { name: "spacing in a unit that is not a length", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 parsec", dy: "5 mm" } } }), expect: [/\/array\/lattice\/dx: expected a length/] },
  { name: "zero columns", doc: B({ array: { lattice: { kind: "rectangular", columns: 0, rows: 1, dx: "5 mm", dy: "5 mm" } } }), expect: [/\/array\/lattice\/columns: expected a number >= 1/] },
  { name: "fractional rows", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 2.5, dx: "5 mm", dy: "5 mm" } } }), expect: [/\/array\/lattice\/rows: expected integer/] },
  { name: "lattice and elements both", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 mm", dy: "5 mm" }, elements: "e.csv" } }), expect: [/\/array: give either "lattice" or "elements", not both/] },
  { name: "phase bits 0", doc: B({ phaseShifter: { bits: 0 } }), expect: [/\/phaseShifter\/bits: expected a number >= 1/] },
  { name: "phase bits 13", doc: B({ phaseShifter: { bits: 13 } }), expect: [/\/phaseShifter\/bits: expected a number <= 12/] },
  { name: "attenuator bits 11", doc: B({ attenuator: { bits: 11, step: "0.5 dB" } }), expect: [/\/attenuator\/bits: expected a number <= 10/] },
  { name: "zero attenuator step", doc: B({ attenuator: { bits: 6, step: "0 dB" } }), expect: [/\/attenuator\/step: expected an attenuator step > 0 dB/] },
  { name: "negative attenuator step", doc: B({ attenuator: { bits: 6, step: "-0.5 dB" } }), expect: [/\/attenuator\/step: expected an attenuator step > 0 dB/] },
  { name: "positive sidelobe level", doc: B({ taper: { kind: "chebyshev", sidelobe: "30 dB" } }), expect: [/\/taper\/sidelobe: expected a negative sidelobe level/] },
  { name: "unknown taper", doc: B({ taper: { kind: "taylr", sidelobe: "-30 dB", nbar: 4 } }), expect: [/\/taper: unknown kind "taylr"; did you mean "taylor"\?/] },
  { name: "Taylor without nbar", doc: B({ taper: { kind: "taylor", sidelobe: "-30 dB" } }), expect: [/\/taper: missing required key "nbar"/] },
  { name: "grid step 0", doc: B({ beams: { kind: "azel", az: { from: -10, to: 10, step: 0 }, el: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams\/az\/step: expected a number > 0/] },
  { name: "grid step larger than the span", doc: B({ beams: { kind: "azel", az: { from: -10, to: 10, step: 500 }, el: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams\/az\/step: step 500 is larger than the span 20/] },
  { name: "grid to below from", doc: B({ beams: { kind: "azel", az: { from: 10, to: -10, step: 1 }, el: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams\/az: "to" \(-10\) is below "from" \(10\)/] },
  { name: "more beams than a table can hold", doc: B({ beams: { kind: "azel", az: { from: -90, to: 90, step: 0.0001 }, el: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams\/az\/step: step 0.0001 gives 1800001 values; expected at most 1048576/] },
  { name: "u-v beams outside visible space", doc: B({ beams: { kind: "uv", u: { from: 0.8, to: 0.9, step: 0.1 }, v: { from: 0.8, to: 0.8, step: 1 } } }), expect: [/\/beams: 2 beam\(s\) outside visible space/] },
  { name: "azimuth past 90°", doc: B({ beams: { kind: "azel", az: { from: 80, to: 95, step: 5 }, el: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams\/az\/to: expected a value from -90 to 90/] },
  { name: "overlapping word fields", doc: B({ word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 4, width: 8 }] } }), expect: [/\/word\/fields\/1: field "atten" overlaps field "phase"/] },
  { name: "phase field too narrow", doc: B({ phaseShifter: { bits: 6 }, word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 4 }, { name: "atten", shift: 8, width: 8 }] } }), expect: [/\/word\/fields\/0\/width: field "phase" is 4 bits wide but the phase shifter has 6 bits/] },
  { name: "field past the word", doc: B({ word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 12, width: 8 }] } }), expect: [/\/word\/fields\/1: field "atten" \(bits 12…19\) runs past the 16-bit word/] },
  { name: "off word too wide", doc: B({ word: { bits: 16, off: 70000, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 8, width: 8 }] } }), expect: [/\/word\/off: expected an off word that fits in 16 bits/] },
  // a 6-bit attenuator and no "atten" field: every word commanded 0 dB (exit 0) while beams.csv analysed the taper as applied
  { name: "attenuator bits but no atten field in the word", doc: B({ word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 8 }] } }), expect: [/scenario\.json: \/word\/fields: expected a field named "atten" \(at least 6 bits wide\) for the attenuator's 6-bit codes/] },
  { name: "constant field without a value", doc: B({ word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 8, width: 6 }, { name: "enable", shift: 15, width: 1 }] } }), expect: [/\/word\/fields\/2: constant field "enable" needs a "value"/] },
  { name: "calibration file missing", doc: B({ calibration: "nope.csv" }), expect: [/nope\.csv: \/calibration: file not found/] },
  { name: "problems in several places are reported together", doc: B({ frequency: "-3 GHz", array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "15 mm", dy: "15 mm" } }, calibration: "cal.csv", word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 2 }] } }), files: { "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,1,0\n" }, expect: [/\/frequency: expected a frequency > 0/, /cal\.csv: missing 7 element\(s\)/, /\/word\/fields\/0\/width: field "phase" is 2 bits wide/] },
  { name: "calibration misses elements", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,1,0\n1,2,0\n" }, expect: [/cal\.csv: missing 6 element\(s\): 2–7/] },
  { name: "calibration row duplicated", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8 + "3,5,0\n" }, expect: [/cal\.csv, line 10, column element: element 3 is listed twice \(also on line 5\)/] },
  { name: "calibration row for an unknown element", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8 + "99,5,0\n" }, expect: [/cal\.csv, line 10, column element: element 99 is not in the array/] },
  { name: "calibration cell not a number", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8.replace("\n4,0,0", "\n4,12deg,0") }, expect: [/cal\.csv, line 6, column phase_offset_deg: expected a number, got "12deg"/] },
  // a cell's terminal escape sequence reached the terminal raw inside the message quoting it (ESC [2J cleared the screen)
  { name: "calibration cell holding a terminal escape sequence", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8.replace("\n4,0,0", "\n4,\u001b[2J\u009b31m,0") }, expect: [/cal\.csv, line 6, column phase_offset_deg: expected a number, got "\\u001b\[2J\\u009b31m"/], notExpect: [/[\u001b\u009b]/] },
  { name: "calibration with a wrong header", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": "id,phase,gain\n0,0,0\n" }, expect: [/cal\.csv, line 1, column id: unknown column "id"/] },
  { name: "calibration file empty", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": "" }, expect: [/cal\.csv: expected a header row/] },
  { name: "calibration not UTF-8", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": Buffer.from([0x65, 0x6c, 0xff, 0xfe, 0x0a]) }, expect: [/cal\.csv: \/calibration: expected UTF-8 text/] },
  { name: "calibration with a ragged row", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8.replace("\n2,0,0", "\n2,0") }, expect: [/cal\.csv, line 4: expected 3 cells/] },
  { name: "elements.csv: duplicated element", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...line8, "3,0.5,0"]) }, expect: [/el\.csv, line 10, column element: element 3 is listed twice/] },
  { name: "elements.csv: ragged rows, and no follow-on errors", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": "element,x_m,y_m,z_m\n0,0,0\n1,0.01,0\n" }, expect: [/el\.csv, line 2: expected 4 cells/, /el\.csv, line 3: expected 4 cells/], notExpect: [/disabled/, /taper/] },
  { name: "elements.csv: x not a number", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS(["0,abc,0", ...line8.slice(1)]) }, expect: [/el\.csv, line 2, column x_m: expected a number from -10000 to 10000, got "abc"/] },
  { name: "elements.csv: enabled neither yes nor no", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": "element,x_m,y_m,enabled\n0,0,0,maybe\n1,0.01,0,1\n" }, expect: [/el\.csv, line 2, column enabled: expected 1\/0, true\/false or yes\/no, got "maybe"/] },
  { name: "elements.csv: negative element id", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS(["-1,0,0", "1,0.01,0"]) }, expect: [/el\.csv, line 2, column element: expected a whole number from 0 to 2147483647, got "-1"/] },
  { name: "elements.csv: two elements at one place", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS(["0,0,0", "1,0,0"]) }, expect: [/el\.csv, line 3: element 1 sits at the same position as element 0/] },
  { name: "beam list missing", doc: B({ beams: { kind: "list", file: "beams.csv" } }), expect: [/beams\.csv: \/beams\/file: file not found/] },
  { name: "beam list outside visible space", doc: B({ beams: { kind: "list", file: "beams.csv" } }), files: { "beams.csv": "u,v\n0,0\n0.9,0.9\n" }, expect: [/beams\.csv, line 3: beam \(u=0\.9, v=0\.9\) is outside visible space/] },
  // past the horizon by 4e-8 (more than the 1e-12 a rounding of the horizon is given)
  { name: "beam list just outside visible space", doc: B({ beams: { kind: "list", file: "beams.csv" } }), files: { "beams.csv": "u,v\n0.7071068,0.7071068\n" }, expect: [/beams\.csv, line 2: beam \(u=0\.7071068, v=0\.7071068\) is outside visible space; expected u² \+ v² ≤ 1/] },
  // both column pairs: u,v were dropped without a word and the beam built at az 0, el 0
  { name: "beam list with both az_deg,el_deg and u,v", doc: B({ beams: { kind: "list", file: "beams.csv" } }), files: { "beams.csv": "# two pairs\naz_deg,el_deg,u,v\n0,0,0.5,0\n" }, expect: [/beams\.csv, line 2: header az_deg,el_deg,u,v names both az_deg,el_deg and u,v columns; expected one pair/] },
  { name: "beam list with only a header", doc: B({ beams: { kind: "list", file: "beams.csv" } }), files: { "beams.csv": "az_deg,el_deg\n" }, expect: [/beams\.csv, line 1: expected data rows after the header/] },
  { name: "beam list cell not a number", doc: B({ beams: { kind: "list", file: "beams.csv" } }), files: { "beams.csv": "az_deg,el_deg\n10,x\n" }, expect: [/beams\.csv, line 2, column el_deg: expected a number, got "x"/] },
  { name: "phase states: code past the part", doc: B({ phaseShifter: { bits: 2, states: "ps.csv" } }), files: { "ps.csv": "code,phase_deg,gain_db\n0,0,0\n1,90,0\n2,180,0\n3,270,0\n4,0,0\n" }, expect: [/ps\.csv, line 6, column code: code 4 does not exist on a 2-bit part/] },
  { name: "phase states: a code missing", doc: B({ phaseShifter: { bits: 2, states: "ps.csv" } }), files: { "ps.csv": "code,phase_deg,gain_db\n0,0,0\n1,90,0\n3,270,0\n" }, expect: [/ps\.csv: missing 1 state\(s\): code 2/] },
  { name: "atten states per element: an element missing", doc: B({ attenuator: { bits: 1, step: "1 dB", states: "as.csv" } }), files: { "as.csv": "element,code,atten_db,phase_deg\n" + Array.from({ length: 7 }, (_, e) => `${e},0,0,0\n${e},1,1,0`).join("\n") + "\n" }, expect: [/as\.csv: missing 2 state\(s\): element 7 code 0, element 7 code 1/] },
  { name: "randomized quantizer with measured states", doc: B({ quantizer: { method: "randomized", seed: 1 }, phaseShifter: { bits: 2, states: "ps.csv" } }), files: { "ps.csv": "code,phase_deg,gain_db\n0,0,0\n1,90,0\n2,180,0\n3,270,0\n" }, expect: [/\/quantizer\/method: expected "nearest" with measured state tables/] },
  { name: "optimized quantizer: negative gain-loss limit", doc: B({ quantizer: { method: "optimized", maxGainLossDb: -0.1 } }), expect: [/\/quantizer\/maxGainLossDb: expected a number >= 0/] },
  { name: "optimized quantizer: unknown objective", doc: B({ quantizer: { method: "optimized", objective: "rms" } }), expect: [/\/quantizer\/objective: expected one of "psl"/] },
  { name: "gain-loss limit on a quantizer that does not optimise", doc: B({ quantizer: { method: "nearest", maxGainLossDb: 0.3 } }), expect: [/\/quantizer\/maxGainLossDb: "maxGainLossDb" applies to the optimized quantizer only/] },
  { name: "sweep: unknown quantizer", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3", "--quantizer", "nearest,optimised"], expect: [/--quantizer: expected one or more of nearest, randomized, optimized/] },
  // a value listed twice in a sweep list was merged without a word while the scenario refuses every repeated value (frequencies, disabled ids, outputs)
  { name: "sweep: a bit depth listed twice (overlapping ranges)", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3..5,5..6"], expect: [/--phase-bits: 5 bits is listed twice in "3\.\.5,5\.\.6"; expected each bit depth once/] },
  { name: "sweep: an attenuator step listed twice (0.5 and 0.50 dB)", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3", "--atten-step", "0.5,1,0.50"], expect: [/--atten-step: 0\.5 dB is listed twice in "0\.5,1,0\.50"; expected each step once/] },
  { name: "sweep: a quantizer listed twice", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3", "--quantizer", "nearest,randomized,nearest"], expect: [/--quantizer: nearest is listed twice in "nearest,randomized,nearest"; expected each quantizer once/] },
  // 72 parts × 1 M beams ran for hours towards a 6.6 GB metrics array; derived: 12 bit depths × 601 × 601 beams = 4 334 412 > 4 194 304
  { name: "sweep: more analysed beams than a sweep holds", doc: B({ beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.002 }, v: { from: -0.6, to: 0.6, step: 0.002 } } }), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "1..12"], expect: [/scenario\.json: \/beams: the sweep would analyse 12 part\(s\) × 1 frequency × 361201 beams = 4334412 beams; expected at most 4194304/] },
  // 64 frequencies × 1 M beams ran on towards a 5.6 GB metrics array; derived: 12 × 601 × 601 = 4 334 412 > 4 194 304
  { name: "build: more analysed beams than a build holds", doc: B({ frequency: Array.from({ length: 12 }, (_, i) => `${10 + i / 10} GHz`), beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.002 }, v: { from: -0.6, to: 0.6, step: 0.002 } } }), expect: [/scenario\.json: \/beams: the analysis would cover 12 frequencies × 361201 beams = 4334412 beams; expected at most 4194304 \(build --no-analysis writes the tables/] },
  { name: "unknown disabled element", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 mm", dy: "5 mm" }, disabled: [3, 12] } }), expect: [/\/array\/disabled\/1: no element 12 in the array/] },
  { name: "every element disabled", doc: B({ array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "5 mm", dy: "5 mm" }, disabled: [0, 1] } }), expect: [/\/array\/disabled: every element is disabled/] },
  { name: "scenario file that does not exist", args: (d) => ["build", join(d, "missing.json"), "-o", join(d, "out")], expect: [/missing\.json: file not found/] },
  {
    name: "output folder that steercode did not write",
    doc: B(),
    prepare: (d) => { mkdirSync(join(d, "out")); writeFileSync(join(d, "out", "mine.txt"), "x"); },
    expect: [/out: exists and was not written by steercode/],
  },
  // element pattern and band (interface contract v2)
  { name: "element table that stops short of the horizon", doc: B({ element: { pattern: "table", file: "el.csv" } }), files: { "el.csv": "theta_deg,phi_deg,gain_db\n0,0,0\n45,0,-1.5\n80,0,-8\n" }, expect: [/el\.csv: does not cover the upper hemisphere: θ ends at 80°, below 90° \(the horizon\)/] },
  { name: "element table with a hole in its θ/φ grid", doc: B({ element: { pattern: "table", file: "el.csv" } }), files: { "el.csv": "theta_deg,phi_deg,gain_db\n0,0,0\n0,90,0\n90,0,-20\n" }, expect: [/el\.csv: does not cover the upper hemisphere: the θ\/φ grid has 1 hole\(s\): θ = 90°, φ = 90°/] },
  { name: "element table with a non-finite gain", doc: B({ element: { pattern: "table", file: "el.csv" } }), files: { "el.csv": "theta_deg,phi_deg,gain_db\n0,0,0\n90,0,-inf\n" }, expect: [/el\.csv, line 3, column gain_db: expected a number, got "-inf"/] },
  { name: "element table with NaN", doc: B({ element: { pattern: "table", file: "el.csv" } }), files: { "el.csv": "theta_deg,phi_deg,gain_db\n0,0,NaN\n90,0,-20\n" }, expect: [/el\.csv, line 2, column gain_db: expected a number, got "NaN"/] },
  { name: "element table with θ past 180°", doc: B({ element: { pattern: "table", file: "el.csv" } }), files: { "el.csv": "theta_deg,phi_deg,gain_db\n0,0,0\n90,0,-20\n200,0,-30\n" }, expect: [/el\.csv, line 4, column theta_deg: expected θ from 0 to 180 degrees/] },
  { name: "cosine element without an exponent", doc: B({ element: { pattern: "cosine" } }), expect: [/\/element: .*exponent/] },
  { name: "cosine element and a beam on the horizon", doc: B({ element: { pattern: "cosine", exponent: 1 }, beams: { kind: "uv", u: { from: 0, to: 1, step: 0.5 }, v: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams: 1 beam\(s\) on the horizon or within 0\.0000573° of it \(cos θ ≤ 1e-6, θ > 89\.9999427°; first: beam 2\)/] },
  // θ = 89.99999° is inside the margin: the message said "on the horizon … expected θ < 90°", which the beam is
  { name: "cosine element and a beam 0.00001° above the horizon (inside the margin)", doc: B({ element: { pattern: "cosine", exponent: 1 }, beams: { kind: "azel", az: { from: 89.99999, to: 89.99999, step: 1 }, el: { from: 0, to: 0, step: 1 } } }), expect: [/\/beams: 1 beam\(s\) on the horizon or within 0\.0000573° of it .*expected every beam at θ ≤ 89\.9999427°/] },
  { name: "band starting at 0 Hz", doc: B({ band: { from: "0 GHz", to: "10 GHz", step: "1 GHz" } }), expect: [/\/band\/from: expected a frequency in \(0, ∞\), got "0 GHz"/] },
  { name: "band with a negative step", doc: B({ band: { from: "9 GHz", to: "10 GHz", step: "-1 GHz" } }), expect: [/\/band\/step: expected a frequency in \(0, ∞\)/] },
  { name: "band upside down", doc: B({ band: { from: "11 GHz", to: "10 GHz", step: "0.1 GHz" } }), expect: [/\/band: "to" \(10000000000 Hz\) is below "from"/] },
  { name: "band with too many points", doc: B({ band: { from: "9 GHz", to: "11 GHz", step: "0.01 GHz" } }), expect: [/\/band\/step: step 10000000 Hz gives 201 band points; expected at most 64/] },
  // a step past the span kept only "from" and dropped "to" without a word (beam axes refuse it)
  { name: "band step larger than its span", doc: B({ band: { from: "9 GHz", to: "10 GHz", step: "5 GHz" } }), expect: [/scenario\.json: \/band\/step: step 5000000000 Hz is larger than the span 1000000000 Hz; the band would hold only "from"/] },
  { name: "band with a unit that is not a frequency", doc: B({ band: { from: "9 GHz", to: "11 mm", step: "1 GHz" } }), expect: [/\/band\/to: expected a frequency/] },
  // init: "" was exit 3 (cp's EEXIST in the working folder); a dangling link said "no such file or folder (mkdir)";
  // a build folder took the demo's files, which the next build -o there deletes
  { name: "init \"\"", args: () => ["init", ""], expect: [/init: expected a folder name for the demo, got an empty string/] },
  { name: "init into a dangling symbolic link", prepare: (d) => symlinkSync(join(d, "nowhere"), join(d, "link")), args: (d) => ["init", join(d, "link")], expect: [/link: is a symbolic link; expected a new folder or one without the demo's files/] },
  { name: "init into a build folder", prepare: (d) => { mkdirSync(join(d, "b")); writeFileSync(join(d, "b", "manifest.json"), JSON.stringify(MANIFEST)); }, args: (d) => ["init", join(d, "b")], expect: [/b: holds a steercode build \(manifest\.json\); the next build -o there would replace the folder, the demo's files with it/] },
  { name: "unknown option", doc: B(), args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--colour"], expect: [/unknown option --colour/] },
  // the two values were joined: `-o a -o b` wrote a build into a folder named "a,b" (exit 0)
  { name: "an option given twice (-o a -o b)", doc: B(), args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "a"), "-o", join(d, "b"), "--no-analysis"], expect: [/-o was given 2 times \(.*a, .*b\); expected it once/] },
  { name: "--jobs given twice", doc: B(), args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--jobs", "1", "--jobs=2"], expect: [/--jobs was given 2 times \(1, 2\); expected it once/] },
  { name: "--jobs 0", doc: B(), args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--jobs", "0"], expect: [/--jobs: expected a whole number from 1 to 256 in decimal digits, got "0"/] },
  // ---- issue 9: hostile and huge inputs
  // element ids are whole numbers 0 … 2^31 − 1, refused as written (never wrapped to 32 bits nor rounded past 2^53)
  { name: "elements.csv: id 2^32 (would wrap to element 0)", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...line8, "4294967296,0.5,0"]) }, expect: [/el\.csv, line 10, column element: expected a whole number from 0 to 2147483647, got "4294967296"/] },
  { name: "elements.csv: id 2^53 + 1 (would round)", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...line8, "9007199254740993,0.5,0"]) }, expect: [/got "9007199254740993"/] },
  { name: "calibration: id 2^32 + 3 (would land on element 3)", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8.replace("\n3,0,0", "\n4294967299,0,0") }, expect: [/cal\.csv, line 5, column element: expected a whole number from 0 to 2147483647, got "4294967299"/, /cal\.csv: missing 1 element\(s\): 3/] },
  // ids that are whole numbers only after Number() rounds them (were taken as 2147483647 and 0)
  { name: "elements.csv: id 2147483647.0000000001 (would round to 2^31 − 1)", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...line8, "2147483647.0000000001,0.5,0"]) }, expect: [/el\.csv, line 10, column element: expected a whole number from 0 to 2147483647, got "2147483647\.0000000001"/] },
  { name: "elements.csv: id 1e-400 (would underflow to 0)", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...line8.slice(1), "1e-400,0,0"]) }, expect: [/el\.csv, line 9, column element: expected a whole number from 0 to 2147483647, got "1e-400"/] },
  // JSON numbers that are whole only after the double rounds them (disabled element 2, resp. 0, and a 4-column lattice)
  { name: "disabled id 2.0000000000000001 (would round to 2)", doc: '{"format":"steercode-scenario/1","frequency":"10 GHz","array":{"lattice":{"kind":"rectangular","columns":8,"rows":1,"dx":"5 mm","dy":"5 mm"},"disabled":[2.0000000000000001]},"beams":{"kind":"azel","az":{"from":0,"to":0,"step":1},"el":{"from":0,"to":0,"step":1}},"phaseShifter":{"bits":3},"word":{"bits":8,"fields":[{"name":"phase","shift":0,"width":3}]}}', expect: [/scenario\.json: \/array\/disabled\/0: expected a whole number, got 2\.0000000000000001/] },
  { name: "lattice rows 1e-400 (would underflow to 0)", doc: '{"format":"steercode-scenario/1","frequency":"10 GHz","array":{"lattice":{"kind":"rectangular","columns":8,"rows":1e-400,"dx":"5 mm","dy":"5 mm"}},"beams":{"kind":"azel","az":{"from":0,"to":0,"step":1},"el":{"from":0,"to":0,"step":1}},"phaseShifter":{"bits":3},"word":{"bits":8,"fields":[{"name":"phase","shift":0,"width":3}]}}', expect: [/scenario\.json: \/array\/lattice\/rows: expected a whole number, got 1e-400/] },
  // one schema question for all of them: asked once per number, 20 000 of these took 51 s (40 000 would pass the test's timeout)
  { name: "40 000 disabled ids each 2.0000000000000001", doc: JSON.stringify(B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 mm", dy: "5 mm" }, disabled: [0] } })).replace('"disabled":[0]', `"disabled":[${Array(40000).fill("2.0000000000000001").join(",")}]`), expect: [/\/array\/disabled\/0: expected a whole number, got 2\.0000000000000001/, /and 39 9\d\d more problem/] },
  { name: "disabled id 2^32", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 mm", dy: "5 mm" }, disabled: [4294967296] } }), expect: [/\/array\/disabled\/0: expected a number <= 2147483647/] },
  // strict JSON: what JSON.parse lets through silently
  { name: "a key given twice (JSON.parse keeps the last)", doc: JSON.stringify(B(), null, 2).replace('"name": "test",', '"name": "test",\n  "name": "again",'), expect: [/scenario\.json, line 4: \/name: not valid JSON \(key "name" is given twice in one object/] },
  { name: "JSON nested 10 000 deep", doc: "[".repeat(10000) + "]".repeat(10000), expect: [/scenario\.json, line 1: .*not valid JSON \(nested deeper than 64 levels/] },
  { name: "an integer of 1e400 (not \"got null\")", doc: JSON.stringify(B()).replace('"bits":3', '"bits":1e400'), expect: [/\/phaseShifter\/bits: not valid JSON \(number 1e400 is too large/], notExpect: [/null/] },
  // physical bounds
  { name: "frequency 1e400 GHz", doc: B({ frequency: "1e400 GHz" }), expect: [/\/frequency: expected a frequency within the range of a double/] },
  { name: "frequency 1e308 Hz", doc: B({ frequency: 1e308 }), expect: [/\/frequency: expected a frequency from 1 Hz to 1000 THz, got 1e\+308/] },
  { name: "spacing 1e300 m", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: 1e300, dy: "5 mm" } } }), expect: [/\/array\/lattice\/dx: expected a spacing from 1 nm to 10 km, got 1e\+300/] },
  { name: "element position 1e300 m", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...line8.slice(0, 7), "7,1e300,0"]) }, expect: [/el\.csv, line 9, column x_m: expected a number from -10000 to 10000, got "1e300"/] },
  { name: "attenuator step 1e300 dB", doc: B({ attenuator: { bits: 6, step: "1e300 dB" } }), expect: [/\/attenuator\/step: expected an attenuator step of at most 100 dB/] },
  { name: "a measured state gain of 1e300 dB", doc: B({ phaseShifter: { bits: 2, states: "ps.csv" } }), files: { "ps.csv": "code,phase_deg,gain_db\n0,0,0\n1,90,1e300\n2,180,0\n3,270,0\n" }, expect: [/ps\.csv, line 3, column gain_db: expected a number from -200 to 200, got "1e300"/] },
  // a list with no quantizer in it wrote a sweep of 0 parts (exit 0)
  { name: "sweep --quantizer ,", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--quantizer", ","], expect: [/--quantizer: expected one or more of nearest, randomized, optimized \(comma-separated\), got "," \(an empty item\)/] },
  // an empty -o is the working folder to resolve(): the build was written into it
  { name: "build -o an empty string", doc: B(), args: (d) => ["build", join(d, "scenario.json"), "-o", ""], expect: [/-o: expected a folder name, got an empty string/] },
  // the same for the commands that write one file: the message named no file ("cannot write the report: ENOENT"; calibrate: "steercode: is a folder")
  { name: "report -o an empty string", prepare: (d) => mkdirSync(join(d, "out")), args: (d) => ["report", join(d, "out"), "-o", ""], expect: [/-o: expected a file name for the report \(e\.g\. report\.html\), got an empty string/] },
  { name: "calibrate -o an empty string", doc: B(), files: { "rev.csv": REV(revRows()) }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", ""], expect: [/-o: expected a file name for the calibration \(e\.g\. cal\.csv\), got an empty string/] },
  // a step the attenuator's 31.5 dB range (6 bits × 0.5 dB) cannot hold in 10 bits: 1e-300 swept a "1002-bit" part and
  // sweep.csv printed its step as 0.000000 (exit 0); derived: 31.5 / 0.01 = 3150 levels → 12 bits
  { name: "sweep --atten-step needing more than 10 attenuator bits", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3", "--atten-step", "0.5,0.01"], expect: [/--atten-step: 0\.01 dB over the attenuator's 31\.5 dB range needs a 12-bit attenuator; expected a step that needs at most 10 bits, as a scenario's attenuator \(at least 31\.5 \/ 1023 ≈ 0\.0308 dB here\)/] },
  { name: "sweep --atten-step 1e-300", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3", "--atten-step", "1e-300"], expect: [/--atten-step: 1e-300 dB over the attenuator's 31\.5 dB range needs a 1002-bit attenuator/] },
  { name: "sweep --atten-step 1e300", doc: B(), args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--atten-step", "1e300"], expect: [/--atten-step: expected steps in dB greater than 0 and at most 100/] },
  // only regular files are read, with limits that hold for streams too
  { name: "calibration is /dev/zero", doc: B({ calibration: "/dev/zero" }), expect: [/\/dev\/zero: \/calibration: expected a regular file, found a character device/] },
  { name: "calibration is a named pipe with no writer (would hang)", doc: B({ calibration: "fifo" }), prepare: (d) => execFileSync("mkfifo", [join(d, "fifo")]), expect: [/fifo: \/calibration: expected a regular file, found a named pipe/] },
  { name: "scenario is /dev/zero", args: () => ["check", "/dev/zero"], expect: [/\/dev\/zero: expected a regular file, found a character device/] },
  { name: "scenario over 1 MiB", doc: JSON.stringify(B({ name: "x".repeat(1100000) })), expect: [/scenario\.json: file is \d+ bytes; expected at most 1048576 bytes/] },
  { name: "a CSV line longer than 4096 characters", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8 + "8," + "0".repeat(5000) + ",0\n" }, expect: [/cal\.csv, line 10: line longer than 4096 characters/] },
  { name: "more than 100 comment lines", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": "# note\n".repeat(101) + CAL8 }, expect: [/cal\.csv, line 101: more than 100 comment lines before the header/] },
  { name: "a beam list past 1 048 576 rows is refused while counting", doc: B({ beams: { kind: "list", file: "beams.csv" } }), files: { "beams.csv": "u,v\n" + "0,0\n".repeat(1048577) }, expect: [/beams\.csv, line 1048578: more than 1048576 data rows; expected at most 1048576 \(beams in a table\)/] },
  { name: "thousands of bad rows: the first 20 and a count", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CAL8 + Array.from({ length: 3000 }, (_, i) => `${i + 100},0,0`).join("\n") + "\n" }, expect: [/cal\.csv, line 29, column element: element 119 is not in the array/, /cal\.csv: … and 2 980 more problem\(s\) in this file \(the first 20 are shown\)/], notExpect: [/element 120 is not/] },
  { name: "a CR-only CSV starting with a # line is read (not called empty)", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": "# date: 2026-12-01 (invented)\r" + CAL8.replace(/\n/g, "\r").replace("\r5,0,0", "\r5,x,0") }, expect: [/cal\.csv, line 8, column phase_offset_deg: expected a number, got "x"/], notExpect: [/empty/] },
  { name: "coincident elements 5000 ids apart", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS([...Array.from({ length: 5000 }, (_, i) => `${i},${(i * 0.01).toFixed(2)},0`), "5000,0,0", "5001,0.01,0"]) }, expect: [/el\.csv, line 5002: element 5000 sits at the same position as element 0/, /el\.csv, line 5003: element 5001 sits at the same position as element 1/] },
  // outputs
  { name: "-o is a dangling symbolic link", doc: B(), prepare: (d) => symlinkSync(join(d, "nowhere"), join(d, "out")), expect: [/out: is a symbolic link; expected a new folder or an earlier steercode output/] },
  // issue 9 item 6: an analysis grid past MAX_ANALYSIS_CELLS (2048 × 2048) is refused before any work
  { name: "analysis grid too large: 28 THz on a 4 × 4 lattice", doc: B({ frequency: "28 THz", array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "5.2 mm", dy: "5.2 mm" } } }), expect: [/scenario\.json: \/frequency: the analysis grid would need 2\.42e\+8 cells \(limit 4194304, 2048 × 2048\): at 28 THz the array spans 1943 λ × 1943 λ/, /--no-analysis/] },
  { name: "analysis grid too large: element positions written in metres where millimetres were meant", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS(line8.map((_, i) => `${i},${(i % 4) * 15},${Math.floor(i / 4) * 15}`)) }, expect: [/\/frequency: the analysis grid would need .* cells .* at 10 GHz the array spans 2001 λ × 1001 λ/, /--no-analysis/] },
  // a line given as a list: its width across the line is λ/2 (it said 93400 λ, the pitch along the line borrowed)
  { name: "analysis grid too large: two elements 1 km apart in a row", doc: B({ array: { elements: "el.csv" } }), files: { "el.csv": ELS(["0,0,0", "1,1000,0"]) }, expect: [/\/frequency: the analysis grid would need .* cells .* at 10 GHz the array spans 66710 λ × 0\.5 λ/, /--no-analysis/] },
  { name: "analysis grid too large: the optimized quantizer needs the grid even with --no-analysis", doc: B({ frequency: "28 THz", quantizer: { method: "optimized" }, array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "5.2 mm", dy: "5.2 mm" } } }), args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--no-analysis"], expect: [/\/frequency: the analysis grid would need .* the optimized quantizer searches on this grid, so use another quantizer/] },
  // a band point past the grid limit: its analyser would build a grid the limit forbids (was exit 3)
  { name: "analysis grid too large at a band point (the table frequency fits)", doc: B({ frequency: "280 GHz", band: { from: "280 GHz", to: "2.8 THz", step: "2.52 THz" }, array: { lattice: { kind: "rectangular", columns: 8, rows: 8, dx: "5.2 mm", dy: "5.2 mm" } } }), expect: [/scenario\.json: \/band: the analysis grid would need .* cells .* at 2\.8 THz \(a band point\) the array spans 388\.5 λ × 388\.5 λ.*narrow the band/] },
  { name: "analysis grid too large: sweep refuses too", doc: B({ frequency: "28 THz", array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "5.2 mm", dy: "5.2 mm" } } }), args: (d) => ["sweep", join(d, "scenario.json"), "--phase-bits", "3..4", "-o", join(d, "out")], expect: [/\/frequency: the analysis grid would need/] },
  { name: "calibrate: element not in the array", doc: B(), files: { "rev.csv": REV([...revRows(), "9,0,0", "9,1,0", "9,2,0", "9,3,0"]) }, args: CALIBRATE(), expect: [/rev\.csv, line 66, column element: element 9 is not in the array/] },
  { name: "calibrate: an enabled element without readings", doc: B(), files: { "rev.csv": REV(revRows((e) => e === 5)) }, args: CALIBRATE(), expect: [/rev\.csv: no readings for 1 enabled element\(s\): 5; expected readings for every enabled element/] },
  { name: "calibrate: too few codes", doc: B(), files: { "rev.csv": REV(revRows((e, k) => e === 2 && k > 2)) }, args: CALIBRATE(), expect: [/rev\.csv, line 18: element 2 \(lines 18–20\) has 2 code\(s\) besides code 0; expected at least three/] },
  { name: "calibrate: code 0 missing", doc: B(), files: { "rev.csv": REV(revRows((e, k) => e === 3 && k === 0)) }, args: CALIBRATE(), expect: [/rev\.csv, line 26: element 3 .* has no reading at code 0/] },
  { name: "calibrate: NaN power", doc: B(), files: { "rev.csv": REV(revRows()).replace(/\n4,2,[-\d.]+/, "\n4,2,NaN") }, args: CALIBRATE(), expect: [/rev\.csv, line 36, column power_db: expected a number from -300 to 300, got "NaN"/] },
  { name: "calibrate: duplicate (element, code)", doc: B(), files: { "rev.csv": REV([...revRows(), "1,3,-0.5"]) }, args: CALIBRATE(), expect: [/rev\.csv, line 66: element 1 code 3 is listed twice \(also on line 13\)/] },
  { name: "calibrate: power that does not vary", doc: B(), files: { "rev.csv": REV(revRows().map((r) => (r.startsWith("6,") ? r.replace(/,[-\d.]+$/, ",-1.5") : r))) }, args: CALIBRATE(), expect: [/rev\.csv, line 50: element 6 \(lines 50–57\): the power does not vary with the code \(no solution\)/] },
  { name: "calibrate: code past the phase shifter", doc: B(), files: { "rev.csv": REV([...revRows(), "0,8,0"]) }, args: CALIBRATE(), expect: [/rev\.csv, line 66, column phase_code: code 8 does not exist on the scenario's 3-bit phase shifter/] },
  { name: "calibrate: several frequencies, no frequency_hz column", doc: B({ frequency: ["9 GHz", "10 GHz"] }), files: { "rev.csv": REV(revRows()) }, args: CALIBRATE(), expect: [/rev\.csv, line 1: the data have no frequency_hz column but the scenario lists 2 frequencies/] },
  { name: "calibrate: wrong header", doc: B(), files: { "rev.csv": "element,code,power\n0,0,0\n" }, args: CALIBRATE(), expect: [/rev\.csv, line 1, column code: unknown column "code"; expected columns element,phase_code,power_db/] },
  { name: "calibrate: data file missing", doc: B(), args: CALIBRATE(), expect: [/rev\.csv: file not found/] },
  { name: "calibrate: unknown method", doc: B(), files: { "rev.csv": REV(revRows()) }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rotate", "-o", join(d, "cal.csv")], expect: [/--method: expected rev or field, got "rotate"/] },
  { name: "calibrate: probe direction not two numbers", doc: B(), files: { "rev.csv": REV(revRows()) }, args: CALIBRATE(["--probe-direction", "20"]), expect: [/--probe-direction: expected AZ,EL in degrees \(two numbers\), got "20"/] },
  // a probe point at 1e300 m made the path NaN: "internal error: non-finite value NaN in an output" (exit 3)
  { name: "calibrate: probe position 1e300 m away", doc: B(), files: { "rev.csv": REV(revRows()) }, args: CALIBRATE(["--probe-position=1e300,0,0"]), expect: [/--probe-position: expected coordinates within ±10000 m .*got "1e300,0,0"/] },
  // -o naming the --data file replaced the readings with the derived calibration (exit 0)
  { name: "calibrate: -o is the --data file", doc: B(), files: { "rev.csv": REV(revRows()) }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "rev.csv")], expect: [/rev\.csv: is the --data file \(the readings\); writing the calibration there would replace it/] },
  // an id past 2^53 was named rounded ("element 9007199254740992 is not in the array")
  { name: "calibrate: element id 2^53 + 1 in the data", doc: B(), files: { "rev.csv": REV([...revRows(), "9007199254740993,0,0"]) }, args: CALIBRATE(), expect: [/rev\.csv, line 66, column element: expected a whole number from 0 to 2147483647, got "9007199254740993"/] },
  // -o FILE (calibrate, report): a link, a FIFO or a file that is not of the command's kind.
  // `calibrate -o /dev/stdout` (a link) replaced the system's /dev/stdout link with a file (exit 0);
  // `report -o FIFO` read the FIFO's head and waited for a writer for ever, deaf to SIGTERM
  { name: "calibrate: -o a symbolic link", doc: B(), files: { "rev.csv": REV(revRows()), "old.csv": CAL8 }, prepare: (d) => symlinkSync(join(d, "old.csv"), join(d, "link.csv")), args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "link.csv")], expect: [/link\.csv: is a symbolic link; expected a new file or an earlier calibration file \(steercode does not write through links nor replace them\)/] },
  { name: "calibrate: -o a FIFO", doc: B(), files: { "rev.csv": REV(revRows()) }, prepare: (d) => execFileSync("mkfifo", [join(d, "fifo")]), args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "fifo")], expect: [/fifo: is not a regular file \(a device, FIFO or socket\); expected a new file or an earlier calibration file/] },
  { name: "calibrate: -o a file that is not a calibration (a table)", doc: B(), files: { "rev.csv": REV(revRows()), "table.h": "#define X 1\n" }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "table.h")], expect: [/table\.h: exists and is not a calibration file; calibrate -o may replace only an earlier calibration file, so nothing was written/] },
  { name: "calibrate: -o inside a build's inputs/", doc: B(), files: { "rev.csv": REV(revRows()) }, prepare: (d) => { mkdirSync(join(d, "b", "inputs"), { recursive: true }); writeFileSync(join(d, "b", "manifest.json"), JSON.stringify(MANIFEST)); writeFileSync(join(d, "b", "inputs", "calibration.csv"), CAL8); }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "b", "inputs", "calibration.csv")], expect: [/calibration\.csv: lies inside a steercode build \(manifest\.json\) at .*calibrate -o never writes into a steercode output/] },
  { name: "report: -o a FIFO (waited for a writer for ever)", prepare: (d) => { writeFileSync(join(d, "manifest.json"), JSON.stringify(MANIFEST)); execFileSync("mkfifo", [join(d, "fifo")]); }, args: (d) => ["report", d, "-o", join(d, "fifo")], expect: [/fifo: is not a regular file \(a device, FIFO or socket\); expected a new file or an earlier report/] },
  { name: "report: -o a symbolic link", prepare: (d) => { writeFileSync(join(d, "manifest.json"), JSON.stringify(MANIFEST)); symlinkSync(join(d, "elsewhere.html"), join(d, "r.html")); }, args: (d) => ["report", d, "-o", join(d, "r.html")], expect: [/r\.html: is a symbolic link; expected a new file or an earlier report/] },
  // a power of −1e300 dB became 10^(−1e29) = 0: "internal error: non-finite value Infinity in an output" (exit 3)
  { name: "calibrate: power -1e300 dB", doc: B(), files: { "rev.csv": REV(revRows()).replace(/\n4,2,[-\d.]+/, "\n4,2,-1e300") }, args: CALIBRATE(), expect: [/rev\.csv, line 36, column power_db: expected a number from -300 to 300, got "-1e300"/] },
  { name: "calibrate field: amplitude past ±300 dB, phase past ±1e6°", doc: B(), files: { "f.csv": "element,amplitude_db,phase_deg\n" + Array.from({ length: 8 }, (_, e) => `${e},${e === 2 ? "1e309" : e === 3 ? "-400" : "0"},${e === 5 ? "2e6" : "0"}`).join("\n") + "\n" }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "f.csv"), "--method", "field", "-o", join(d, "cal.csv")], expect: [/f\.csv, line 4, column amplitude_db: expected a number from -300 to 300, got "1e309"/, /f\.csv, line 5, column amplitude_db: expected a number from -300 to 300, got "-400"/, /f\.csv, line 7, column phase_deg: expected a number from -1000000 to 1000000, got "2e6"/] },
  // an offset past what cal.csv holds (±200 dB) was written, and build then refused the cal.csv calibrate had made
  // derived: readings 250 dB on element 3, 0 dB elsewhere → mean 31.25 dB → element 3's offset 218.75 dB
  { name: "calibrate field: a referred gain offset past ±200 dB", doc: B(), files: { "f.csv": "element,amplitude_db,phase_deg\n" + Array.from({ length: 8 }, (_, e) => `${e},${e === 3 ? 250 : 0},0`).join("\n") + "\n" }, args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "f.csv"), "--method", "field", "-o", join(d, "cal.csv")], expect: [/f\.csv, line 5: element 3 \(line 5\): its gain offset 218\.8 dB \(referred to the enabled elements' mean\) lies outside ±200 dB/] },
  { name: "calibrate: frequency_hz 1e300", doc: B(), files: { "rev.csv": "element,phase_code,power_db,frequency_hz\n" + revRows().map((r) => r + ",1e300").join("\n") + "\n" }, args: CALIBRATE(), expect: [/rev\.csv, line 2, column frequency_hz: expected a number from 1 to 1000000000000000, got "1e300"/] },
  { name: "calibrate: probe direction and position both", doc: B(), files: { "rev.csv": REV(revRows()) }, args: CALIBRATE(["--probe-direction", "0,0", "--probe-position", "0,0,1"]), expect: [/give --probe-direction or --probe-position, not both/] },
  { name: "cal.csv per frequency: scenario frequency outside the listed span", doc: B({ frequency: ["10 GHz", "12 GHz"], calibration: "cal.csv" }), files: { "cal.csv": CALF }, expect: [/scenario\.json: \/frequency\/1: frequency 12000000000 Hz lies outside the calibrated span 9000000000 … 11000000000 Hz; expected a frequency within it \(calibration is interpolated, never extrapolated\)/] },
  { name: "band reaching outside the span of cal.csv's frequency_hz sets", doc: B({ calibration: "cal.csv", band: { from: "10 GHz", to: "11.5 GHz", step: "0.5 GHz" } }), files: { "cal.csv": CALF }, expect: [/scenario\.json: \/band: 1 of 4 band point\(s\) \(11500000000 Hz\) lie outside the span 9000000000 … 11000000000 Hz of the frequency_hz sets in cal\.csv; expected a band within the calibrated span/] },
  { name: "cal.csv per frequency: an element missing at one frequency", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CALF.replace("11e9,4,0,0\n", "") }, expect: [/cal\.csv: missing 1 element\(s\) at frequency_hz 11000000000: 4; expected a row for every element of the array at every listed frequency/] },
  { name: "cal.csv per frequency: frequency not positive", doc: B({ calibration: "cal.csv" }), files: { "cal.csv": CALF.replace("11e9,4,0,0", "-1,4,0,0") }, expect: [/cal\.csv, line 14, column frequency_hz: expected a frequency from 1 Hz to 1000 THz, got "-1"/] },
  { name: "verify on a folder that is not a build", args: (d) => ["verify", d], expect: [/manifest\.json: not found: expected a steercode build folder/] },
  { name: "verify: manifest.json not valid JSON", prepare: (d) => writeFileSync(join(d, "manifest.json"), "{ nope"), args: (d) => ["verify", d], expect: [/manifest\.json: not valid JSON/] },
  { name: "verify: a manifest input path out of the folder", prepare: (d) => writeFileSync(join(d, "manifest.json"), JSON.stringify({ ...MANIFEST, inputs: [{ role: "calibration", ref: "cal.csv", copy: "../../proc/self/environ" }] })), args: (d) => ["verify", d], expect: [/manifest\.json: \/inputs\/0\/copy: expected "inputs\/calibration\.csv"/] },
  { name: "verify: a manifest file entry that is an absolute path", prepare: (d) => writeFileSync(join(d, "manifest.json"), JSON.stringify({ ...MANIFEST, files: { "/dev/zero": { bytes: 1, sha256: "0".repeat(64) } } })), args: (d) => ["verify", d], expect: [/manifest\.json: \/files\/~1dev~1zero: expected a name inside the folder/] },
  { name: "report: a symbolic link loop as the folder", prepare: (d) => symlinkSync(join(d, "loop"), join(d, "loop")), args: (d) => ["report", join(d, "loop")], expect: [/loop: is a symbolic link loop/] },
  { name: "verify: manifest.json a symbolic link", prepare: (d) => { writeFileSync(join(d, "m.json"), JSON.stringify(MANIFEST)); symlinkSync(join(d, "m.json"), join(d, "manifest.json")); }, args: (d) => ["verify", d], expect: [/manifest\.json: is a symbolic link/] },
  // issue 8 item 5: a string is read only with its unit, and units are case-sensitive (common practice: SI unit symbols)
  { name: "frequency string without a unit", doc: B({ frequency: "28" }), expect: [/\/frequency: expected a frequency.*a string needs its unit \(e\.g\. "28 GHz"\).*got "28"/] },
  { name: "spacing string without a unit", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5.2", dy: "5 mm" } } }), expect: [/\/array\/lattice\/dx: expected a length.*a string needs its unit.*got "5.2"/] },
  { name: "frequency unit in the wrong case (mHz or MHz?)", doc: B({ frequency: "28000 mhz" }), expect: [/\/frequency: .*units are case-sensitive.*write "MHz", not "mhz".*got "28000 mhz"/] },
  { name: "length unit in the wrong case (mm or Mm?)", doc: B({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "5 Mm", dy: "5 mm" } } }), expect: [/\/array\/lattice\/dx: .*units are case-sensitive.*write "mm", not "Mm"/] },
  { name: "sidelobe level string without dB", doc: B({ taper: { kind: "chebyshev", sidelobe: "-30" } }), expect: [/\/taper\/sidelobe: expected a level in dB.*a string needs its unit.*got "-30"/] },
  // issue 8 item 7: an output replaces only an earlier output of the same command (README: output folders)
  {
    name: "sweep -o onto a build folder",
    doc: B(),
    prepare: (d) => { mkdirSync(join(d, "out")); writeFileSync(join(d, "out", "manifest.json"), '{"format": "steercode-manifest/1"}'); writeFileSync(join(d, "out", "table.bin"), "x"); },
    args: (d) => ["sweep", join(d, "scenario.json"), "--phase-bits", "3", "-o", join(d, "out")],
    expect: [/out: exists and holds a steercode build \(manifest\.json\); sweep -o may replace only an earlier sweep output/],
  },
  {
    name: "build -o onto a sweep folder",
    doc: B(),
    prepare: (d) => { mkdirSync(join(d, "out")); writeFileSync(join(d, "out", "sweep.json"), '{"format": "steercode-sweep/1"}'); },
    expect: [/out: exists and holds a steercode sweep \(sweep\.json\); build -o may replace only an earlier build output/],
  },
  {
    name: "report -o onto a file that is not a report",
    prepare: (d) => { mkdirSync(join(d, "out")); writeFileSync(join(d, "out", "manifest.json"), '{"format": "steercode-manifest/1"}'); },
    args: (d) => ["report", join(d, "out"), "-o", join(d, "out", "manifest.json")],
    expect: [/manifest\.json: exists and is not a steercode report \(it is a steercode output file\); report -o may replace only an earlier report/],
  },
  // devices: one beam memory per beamformer IC (8 elements, 3 beams; default 4 channels → devices 0 and 1)
  { name: "devices: channel past the device in the map", doc: B({ devices: { channels: 4, map: "dev.csv" } }), files: { "dev.csv": DEVMAP.replace("\n7,1,3", "\n7,1,4") }, expect: [/dev\.csv, line 9, column channel: channel 4 does not exist on a 4-channel device; expected 0 … 3/] },
  { name: "devices: two elements on one channel", doc: B({ devices: { channels: 4, map: "dev.csv" } }), files: { "dev.csv": DEVMAP.replace("\n7,1,3", "\n7,1,2") }, expect: [/dev\.csv, line 9, column channel: element 7 and element 6 \(line 8\) are both on device 1 channel 2/] },
  { name: "devices: unknown element in the map", doc: B({ devices: { channels: 4, map: "dev.csv" } }), files: { "dev.csv": DEVMAP + "12,2,0\n" }, expect: [/dev\.csv, line 10, column element: element 12 is not in the array/] },
  { name: "devices: the map misses an element", doc: B({ devices: { channels: 4, map: "dev.csv" } }), files: { "dev.csv": DEVMAP.replace("\n7,1,3", "") }, expect: [/dev\.csv: missing 1 element\(s\): 7; expected a row for every element/] },
  { name: "devices: map cell not a whole number", doc: B({ devices: { channels: 4, map: "dev.csv" } }), files: { "dev.csv": DEVMAP.replace("\n7,1,3", "\n7,1,x") }, expect: [/dev\.csv, line 9, column channel: expected a whole number from 0 to 2147483647, got "x"/] },
  { name: "devices: map file missing", doc: B({ devices: { channels: 4, map: "nope.csv" } }), expect: [/nope\.csv: \/devices\/map: file not found/] },
  { name: "devices: beam stride smaller than the channels it must hold", doc: B({ devices: { channels: 4, address: { beamStride: 2 } } }), expect: [/\/devices\/address\/beamStride: beamStride 2 is smaller than the 4 words the channels of device 0 span .*expected a beamStride ≥ 4/] },
  { name: "devices: overlapping addresses", doc: B({ devices: { channels: 4, address: { beamStride: 1, channelStride: 2 } } }), expect: [/\/devices\/address: overlapping addresses on device 0: beam 2 channel 0 and beam 0 channel 1 both map to address 2/] },
  { name: "devices: an image past 4 GiB", doc: B({ devices: { channels: 4, address: { base: 4294967295 } } }), expect: [/\/devices\/address: device 0's image would hold 4294967307 words .*expected at most 4294967296 bytes/] },
  { name: "devices: fill word too wide", doc: B({ devices: { channels: 4, fill: 70000 } }), expect: [/\/devices\/fill: expected a fill word that fits in 16 bits/] },
  { name: "devices: no channels", doc: B({ devices: { channels: 0 } }), expect: [/\/devices\/channels: expected a number >= 1/] },
  { name: "devices: misspelt key", doc: B({ devices: { channels: 4, adress: { base: 0 } } }), expect: [/\/devices: unknown key "adress"; did you mean "address"\?/] },
  { name: "devices: elements.csv device cell not a number", doc: B({ array: { elements: "el.csv" }, devices: { channels: 4 } }), files: { "el.csv": "element,x_m,y_m,device,channel\n0,0,0,0,0\n1,0.01,0,zero,1\n" }, expect: [/el\.csv, line 3, column device: expected a whole number from 0 to 2147483647/] },
  { name: "devices: elements.csv channel past the device", doc: B({ array: { elements: "el.csv" }, devices: { channels: 2 } }), files: { "el.csv": "element,x_m,y_m,device,channel\n0,0,0,0,0\n1,0.01,0,0,2\n" }, expect: [/el\.csv, line 3, column channel: channel 2 does not exist on a 2-channel device/] },
  { name: "devices: elements.csv two elements on one channel", doc: B({ array: { elements: "el.csv" }, devices: { channels: 2 } }), files: { "el.csv": "element,x_m,y_m,device,channel\n0,0,0,3,1\n1,0.01,0,3,1\n" }, expect: [/el\.csv, line 3, column channel: element 1 and element 0 \(line 2\) are both on device 3 channel 1/] },
  { name: "devices: elements.csv with a device column but no channel column", doc: B({ array: { elements: "el.csv" }, devices: { channels: 2 } }), files: { "el.csv": "element,x_m,y_m,device\n0,0,0,3\n1,0.01,0,3\n" }, expect: [/el\.csv: has a device column but no channel column; expected both/] },
  { name: "check --bus-clock that is not a frequency", doc: B({ devices: { channels: 4 } }), args: (d) => ["check", join(d, "scenario.json"), "--bus-clock", "10 parsec"], expect: [/--bus-clock: expected a clock frequency from 1 Hz to 1000 THz such as 10MHz, got "10 parsec"/] },
  // 1e400Hz was an infinite clock: "full load 0.000 µs each", exit 0
  { name: "check --bus-clock 1e400Hz", doc: B({ devices: { channels: 4 } }), args: (d) => ["check", join(d, "scenario.json"), "--bus-clock", "1e400Hz"], expect: [/--bus-clock: expected a clock frequency from 1 Hz to 1000 THz such as 10MHz, got "1e400Hz"/] },
  { name: "check --bus-overhead-bits negative", doc: B({ devices: { channels: 4 } }), args: (d) => ["check", join(d, "scenario.json"), "--bus-clock", "10MHz", "--bus-overhead-bits", "-1"], expect: [/--bus-overhead-bits: expected a whole number from 0 to 4096 in decimal digits, got "-1"/] },
];

// ---- option values read as typed. yargs' number type is Number(): "" and " " were 0 (report --beam '' opened beam 0),
// "0x10" 16 and "1e1" 10 (exit 0); a repeated 1 was added to the first (--jobs 2 --jobs 1 ran 3 threads). Lists dropped
// empty items (--phase-bits 3,,4 swept 3 and 4) and an empty --atten-step or --quantizer was taken as absent.
const re = (s: string) => new RegExp(s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&"));
const BUILD_DIR = (d: string) => writeFileSync(join(d, "manifest.json"), JSON.stringify(MANIFEST));
const WHOLE_OPTIONS: { option: string; range: string; args: (d: string) => string[]; prepare?: (d: string) => void }[] = [
  { option: "--beam", range: "≥ 0", prepare: BUILD_DIR, args: (d) => ["report", d, "-o", join(d, "r.html"), "--beam"] },
  { option: "--jobs", range: "from 1 to 256", args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--jobs"] },
  { option: "--jobs", range: "from 1 to 256", args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3", "--jobs"] },
  { option: "--jobs", range: "from 1 to 256", prepare: BUILD_DIR, args: (d) => ["verify", d, "--jobs"] },
  { option: "--bus-word-bits", range: "from 1 to 4096", args: (d) => ["check", join(d, "scenario.json"), "--bus-clock", "10MHz", "--bus-word-bits"] },
  { option: "--bus-overhead-bits", range: "from 0 to 4096", args: (d) => ["check", join(d, "scenario.json"), "--bus-clock", "10MHz", "--bus-overhead-bits"] },
];
for (const w of WHOLE_OPTIONS)
  for (const [value, said] of [["", "got an empty string"], [" ", 'got " " (only spaces)'], ["0x10", 'got "0x10"'], ["1e1", 'got "1e1"'], ["1.5", 'got "1.5"'], ["3,", 'got "3,"']] as const)
    cases.push({ name: `${w.args("d")[0]} ${w.option} "${value}"`, doc: B({ devices: { channels: 4 } }), ...(w.prepare ? { prepare: w.prepare } : {}), args: (d) => [...w.args(d), value], expect: [re(`${w.option}: expected a whole number ${w.range} in decimal digits, ${said}`)] });
// given with no value after it: "" as well, never the option's default (--jobs at the end of the line ran on every core)
for (const w of WHOLE_OPTIONS) cases.push({ name: `${w.args("d")[0]} ${w.option} with no value`, doc: B({ devices: { channels: 4 } }), ...(w.prepare ? { prepare: w.prepare } : {}), args: w.args, expect: [re(`${w.option}: expected a whole number ${w.range} in decimal digits, got an empty string`)] });
cases.push({ name: "report --beam= (no value)", prepare: BUILD_DIR, args: (d) => ["report", d, "-o", join(d, "r.html"), "--beam="], expect: [re("--beam: expected a whole number ≥ 0 in decimal digits, got an empty string")] });
// yargs reads --no-<name> as false for every option: `build --no-o` wrote a build into a folder named "false" (exit 0),
// `build --compare` compared with a folder "false", `--no-jobs` said got "false"; every option that takes a value, every command
const NO_FORM_BASE: Record<string, { args: (d: string) => string[]; prepare?: (d: string) => void }> = {
  init: { args: (d) => ["init", join(d, "demo")] },
  check: { args: (d) => ["check", join(d, "scenario.json")] },
  build: { args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out")] },
  sweep: { args: (d) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out"), "--phase-bits", "3"] },
  calibrate: { args: (d) => ["calibrate", join(d, "scenario.json"), "--data", join(d, "rev.csv"), "--method", "rev", "-o", join(d, "cal.csv")] },
  diff: { args: (d) => ["diff", d, d], prepare: BUILD_DIR },
  verify: { args: (d) => ["verify", d], prepare: BUILD_DIR },
  report: { args: (d) => ["report", d, "-o", join(d, "r.html")], prepare: BUILD_DIR },
};
for (const [command, spec] of Object.entries(COMMAND_SPECS)) {
  const base = NO_FORM_BASE[command];
  if (!base) continue;
  for (const [name, o] of Object.entries(spec.options)) {
    if (o.type === "boolean") continue;
    cases.push({ name: `${command} --no-${name}`, doc: B(), files: { "rev.csv": REV(revRows()) }, ...(base.prepare ? { prepare: base.prepare } : {}), args: (d) => [...base.args(d), `--no-${name}`], expect: [re(`--no-${name}: ${name.length === 1 ? "-" : "--"}${name} takes a value; only switches (such as --no-analysis) have a --no- form`)] });
  }
}
it("every command with a value option is covered by the --no- cases", () => {
  for (const [command, spec] of Object.entries(COMMAND_SPECS)) if (Object.values(spec.options).some((o) => o.type !== "boolean")) expect(NO_FORM_BASE[command], command).toBeDefined();
});
cases.push({ name: "report --frequency \"\"", prepare: BUILD_DIR, args: (d) => ["report", d, "-o", join(d, "r.html"), "--frequency", ""], expect: [re('--frequency: expected a frequency index (0, 1 …) or a frequency with its unit, e.g. "28 GHz", got an empty string')] });
const SWEEP = (d: string) => ["sweep", join(d, "scenario.json"), "-o", join(d, "out")];
const LISTS: { option: string; expected: string; args: (d: string) => string[]; values: string[] }[] = [
  { option: "--phase-bits", expected: "a range like 3..8 or a list like 3,4,6", args: SWEEP, values: ["3,,4", "3,", ",3", "3..4,"] },
  { option: "--atten-step", expected: "steps in dB greater than 0 and at most 100 like 0.25,0.5,1", args: (d) => [...SWEEP(d), "--phase-bits", "3"], values: ["0.5,,1", "0.5,"] },
  { option: "--quantizer", expected: "one or more of nearest, randomized, optimized (comma-separated)", args: (d) => [...SWEEP(d), "--phase-bits", "3"], values: ["nearest,,randomized", "nearest,"] },
  { option: "--probe-direction", expected: "AZ,EL in degrees (two numbers)", args: CALIBRATE(), values: ["10,,0"] },
  { option: "--probe-position", expected: "X,Y,Z in metres (three numbers)", args: CALIBRATE(), values: ["0,0,,1"] },
];
for (const l of LISTS) {
  for (const v of l.values) cases.push({ name: `${l.option} ${v} (an empty item)`, doc: B(), files: { "rev.csv": REV(revRows()) }, args: (d) => [...l.args(d), l.option, v], expect: [re(`${l.option}: expected ${l.expected}, got "${v}" (an empty item)`)] });
  cases.push({ name: `${l.option} "" (empty)`, doc: B(), files: { "rev.csv": REV(revRows()) }, args: (d) => [...l.args(d), l.option, ""], expect: [re(`${l.option}: expected ${l.expected}, got an empty string`)] });
  cases.push({ name: `${l.option} with no value`, doc: B(), files: { "rev.csv": REV(revRows()) }, args: (d) => [...l.args(d), l.option], expect: [re(`${l.option}: expected ${l.expected}, got an empty string`)] });
}
// the probe's numbers are written as a quantity's number is: 0x10 was 16 degrees / metres (exit 0)
cases.push({ name: "calibrate --probe-direction 0x10,0", doc: B(), files: { "rev.csv": REV(revRows()) }, args: CALIBRATE(["--probe-direction", "0x10,0"]), expect: [re('--probe-direction: expected AZ,EL in degrees (two numbers), got "0x10,0"')] });
cases.push({ name: "calibrate --probe-position 0,0,0x1", doc: B(), files: { "rev.csv": REV(revRows()) }, args: CALIBRATE(["--probe-position", "0,0,0x1"]), expect: [re('--probe-position: expected X,Y,Z in metres (three numbers), got "0,0,0x1"')] });
// an option given twice is exit 2 whatever its values: a repeated 1 was added to a number option's first value
for (const [name, args] of [
  ["--jobs 2 --jobs 1", (d: string) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--jobs", "2", "--jobs", "1"]],
  ["--jobs 1 --jobs 1", (d: string) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--jobs", "1", "--jobs", "1"]],
  ["--beam 1 --beam=1", (d: string) => ["report", d, "-o", join(d, "r.html"), "--beam", "1", "--beam=1"]],
  ["--bus-word-bits 8 --bus-word-bits 1", (d: string) => ["check", join(d, "scenario.json"), "--bus-clock", "10MHz", "--bus-word-bits", "8", "--bus-word-bits", "1"]],
  ["--atten-step 0.5 --atten-step 1", (d: string) => [...SWEEP(d), "--phase-bits", "3", "--atten-step", "0.5", "--atten-step", "1"]],
  ["--probe-direction 0,0 --probe-direction 10,0", CALIBRATE(["--probe-direction", "0,0", "--probe-direction", "10,0"])],
] as const) {
  const option = name.split(" ")[0]!;
  cases.push({ name: `${option} given twice (${name})`, doc: B({ devices: { channels: 4 } }), files: { "rev.csv": REV(revRows()) }, ...(option === "--beam" ? { prepare: BUILD_DIR } : {}), args, expect: [re(`${option} was given 2 times`), /expected it once/] });
}
// string options given empty were taken as not given: no comparison (exit 0), no diff folder (exit 0)
cases.push({ name: "build --compare with no value", doc: B(), args: (d) => ["build", join(d, "scenario.json"), "-o", join(d, "out"), "--compare"], expect: [/--compare: expected an earlier build folder, got an empty string/] });
cases.push({ name: "diff -o an empty string", prepare: BUILD_DIR, args: (d) => ["diff", d, d, "-o", ""], expect: [/-o: expected a folder name, got an empty string/] });

describe("bad input: exit 2, a message naming file and field or line, nothing written", () => {
  it("the corpus holds at least 40 cases", () => expect(cases.length).toBeGreaterThanOrEqual(40));
  for (const c of cases) {
    it.concurrent(c.name, async () => {
      const dir = tempDir("steercode-bad-");
      for (const [n, t] of Object.entries(c.files ?? {})) writeFileSync(join(dir, n), t);
      if (c.doc !== undefined) writeFileSync(join(dir, "scenario.json"), typeof c.doc === "string" ? c.doc : JSON.stringify(c.doc, null, 2));
      c.prepare?.(dir);
      const before = readdirSync(dir).sort();
      const args = c.args ? c.args(dir) : ["build", join(dir, "scenario.json"), "-o", join(dir, "out")];
      const r = cli(args);
      expect(r.code, r.stderr).toBe(2);
      for (const re of c.expect) expect(r.stderr).toMatch(re);
      for (const re of c.notExpect ?? []) expect(r.stderr).not.toMatch(re);
      expect(r.stderr).not.toMatch(/\n\s+at .+:\d+:\d+/); // no stack trace
      expect(r.stderr).not.toMatch(/internal error/);
      expect(readdirSync(dir).sort()).toEqual(before); // nothing written, no staging folder left
      if (!c.prepare) expect(existsSync(join(dir, "out"))).toBe(false);
    });
  }

  it("calibrate -o a link leaves the link and the file it names as they were", () => {
    const dir = tempDir("steercode-bad-");
    writeFileSync(join(dir, "scenario.json"), JSON.stringify(B()));
    writeFileSync(join(dir, "rev.csv"), REV(revRows()));
    writeFileSync(join(dir, "old.csv"), CAL8);
    symlinkSync(join(dir, "old.csv"), join(dir, "link.csv"));
    expect(cli(CALIBRATE()(dir).map((x) => (x === join(dir, "cal.csv") ? join(dir, "link.csv") : x))).code).toBe(2);
    expect(lstatSync(join(dir, "link.csv")).isSymbolicLink()).toBe(true);
    expect(readFileSync(join(dir, "old.csv"), "utf8")).toBe(CAL8);
  });

  it("--json reports the problems as one JSON document with exit 2", () => {
    const dir = tempDir();
    writeFileSync(join(dir, "scenario.json"), JSON.stringify(B({ phaseShifter: { bits: 0 }, attenuator: { bits: 6, step: "0 dB" } })));
    const r = cli(["check", join(dir, "scenario.json"), "--json"]);
    expect(r.code).toBe(2);
    const doc = JSON.parse(r.stdout);
    expect(doc.ok).toBe(false);
    expect(doc.problems.map((p: { pointer: string }) => p.pointer)).toContain("/phaseShifter/bits");
  });
});
