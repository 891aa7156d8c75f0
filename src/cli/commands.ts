/**
 * The commands, their positionals and options: the one table both parsers read.
 * `fast.ts` parses an ordinary command line with yargs-parser straight from it (no yargs,
 * no help machinery loaded); `yargs-cli.ts` builds the full yargs instance from it for
 * help, completion, the version in any other spelling than `--version`/`-v` alone, and
 * every command line the fast path does not accept (so usage errors, did-you-mean and
 * help text stay yargs'). Adding an option = one entry here (DEVELOPERS.md).
 */
import { availableParallelism } from "node:os";
import type { Io } from "./shared.js";
import { MAX_JOBS } from "../io/jobs.js";
import { wholeOption } from "./option-values.js";

export interface OptionSpec {
  type: "string" | "number" | "boolean";
  alias?: string;
  default?: string | number | boolean;
  demandOption?: boolean;
  describe: string;
}

export interface PositionalSpec {
  name: string;
  type: "string";
  default?: string;
  demandOption?: boolean;
  describe: string;
}

/** Parsed arguments as a handler sees them (option names as declared, positionals by name). */
export type Args = Record<string, unknown>;

export interface CommandSpec {
  /** yargs' command string, e.g. "build <scenario>". */
  command: string;
  describe: string;
  /** The usage line in messages. */
  line: string;
  positionals: PositionalSpec[];
  options: Record<string, OptionSpec>;
  examples: [string, string][];
  /** Runs the command (each loads its own module on demand). Absent for help (yargs only). */
  run?: (a: Args, io: Io) => Promise<number>;
}

/** Options every command takes (yargs: global options). `help`/`version` are yargs' own. */
export const GLOBAL: Record<string, OptionSpec> = {
  json: { type: "boolean", default: false, describe: "print one JSON document on stdout instead of prose" },
};

/** --jobs N: the most threads for the analysis, the main thread included; how many run is measured (README). */
const JOBS_OPTION: OptionSpec = { type: "number", default: availableParallelism(), describe: "most threads for the analysis, the main thread included (at most the number of cores); more start only when the work pays for them" };

export function jobsOption(raw: unknown): number {
  // the library's thread-count rule (isJobsCount: 1 to MAX_JOBS), read from the option's text
  const jobs = wholeOption("--jobs", raw, 1, MAX_JOBS);
  // more threads than cores only compete for them (and each holds its own analysis buffers)
  const cores = availableParallelism();
  if (jobs > cores) {
    process.stderr.write(`steercode: note: --jobs ${jobs} is more than the ${cores} core(s) of this machine; using ${cores}\n`);
    return cores;
  }
  return jobs;
}

/** sweep's analysis workers start with the command, so that their start overlaps the loading of the scenario (io/spare-workers.ts). */
async function prestart(jobs: number): Promise<void> {
  (await import("../io/spare-workers.js")).prestartWorkers(jobs - 1);
}

const SCENARIO: PositionalSpec = { name: "scenario", type: "string", demandOption: true, describe: "the scenario file (JSON, steercode-scenario/1)" };
const opt = (a: unknown) => (a === undefined ? null : String(a));

export const COMMAND_SPECS: Record<string, CommandSpec> = {
  init: {
    command: "init [dir]",
    describe: "write a ready demo scenario (invented data)",
    line: "init [dir]",
    positionals: [{ name: "dir", type: "string", default: "steercode-demo", describe: "folder to write the demo scenario and its calibration file into" }],
    options: {},
    examples: [["$0 init my-array", "write my-array/scenario.json and my-array/cal.csv"]],
    run: async (a, io) => (await import("./init.js")).initCommand(io, String(a.dir)),
  },
  check: {
    command: "check <scenario>",
    describe: "validate a scenario; print derived facts and warnings",
    line: "check <scenario>",
    positionals: [SCENARIO],
    options: {
      "bus-clock": { type: "string", describe: "serial clock that loads the device images, e.g. 10MHz: check prints each device's full-load time" },
      "bus-word-bits": { type: "number", describe: "bits clocked per word (default: the word's bytes × 8)" },
      "bus-overhead-bits": { type: "number", default: 0, describe: "framing bits per word on the bus (command, address, gaps)" },
    },
    examples: [
      ["$0 check fixtures/demo/scenario.json", "every problem at once, then wavelengths, grating-lobe limits, table size"],
      ["$0 check scenario.json --bus-clock 10MHz --bus-overhead-bits 8", "with devices: each image's size and full-load time over the bus"],
    ],
    run: async (a, io) => {
      const m = await import("./check.js");
      return m.checkCommand(io, String(a.scenario), m.busOptions(a["bus-clock"], a["bus-word-bits"], a["bus-overhead-bits"]));
    },
  },
  build: {
    command: "build <scenario>",
    describe: "write the beam tables (and beams.csv unless --no-analysis)",
    line: "build <scenario> [-o dir]",
    positionals: [SCENARIO],
    options: {
      o: { alias: "out", type: "string", describe: "output folder (replaced only if it is an earlier build)", default: "steercode-build" },
      jobs: JOBS_OPTION,
      analysis: { type: "boolean", default: true, describe: "write beams.csv (--no-analysis: tables only)" },
      compare: { type: "string", describe: "an earlier build folder: write the word-level changes (changes.csv, diff.json) into the new one" },
    },
    examples: [
      ["$0 build scenario.json -o build-2", "tables, beams.csv and manifest.json in build-2/"],
      ["$0 build scenario.json -o build-2 --compare build-1", "also: which words changed since build-1"],
      ["$0 build scenario.json --no-analysis", "tables only (fastest)"],
    ],
    run: async (a, io) => {
      // its workers start once the scenario's size is known, if the work pays for them (build.ts)
      const jobs = jobsOption(a.jobs);
      return (await import("./build.js")).buildCommand(io, { scenario: String(a.scenario), out: String(a.o), jobs, analysis: a.analysis !== false, compare: opt(a.compare) });
    },
  },
  sweep: {
    command: "sweep <scenario>",
    describe: "bit-depth trade-off: the whole grid for every phase-bit depth and attenuator step",
    line: "sweep <scenario> [--phase-bits 3..8] [--atten-step 0.25,0.5,1] [-o dir]",
    positionals: [SCENARIO],
    options: {
      "phase-bits": { type: "string", default: "3..8", describe: "bit depths: a range 3..8 or a list 3,4,6" },
      "atten-step": { type: "string", describe: "attenuator steps in dB, e.g. 0.25,0.5,1 (default: the scenario's)" },
      quantizer: { type: "string", describe: "nearest, randomized, optimized or several, comma-separated (nearest,randomized,optimized)" },
      o: { alias: "out", type: "string", default: "steercode-sweep", describe: "output folder (replaced only if it is an earlier sweep)" },
      jobs: JOBS_OPTION,
    },
    examples: [["$0 sweep scenario.json --phase-bits 3..7 --atten-step 0.25,0.5,1", "every part over the whole grid: sweep.csv, sweep.json, sweep.svg"]],
    run: async (a, io) => {
      const jobs = jobsOption(a.jobs);
      if (jobs > 1) await prestart(jobs);
      return (await import("./sweep.js")).sweepCommand(io, { scenario: String(a.scenario), out: String(a.o), phaseBits: String(a["phase-bits"]), attenStep: opt(a["atten-step"]), quantizer: opt(a.quantizer), jobs });
    },
  },
  calibrate: {
    command: "calibrate <scenario>",
    describe: "calibration offsets from range readings (REV or per-channel field) → cal.csv",
    line: "calibrate <scenario> --data <file.csv> --method rev|field [--probe-direction AZ,EL | --probe-position X,Y,Z] [-o cal.csv]",
    positionals: [{ name: "scenario", type: "string", demandOption: true, describe: "the scenario file (geometry, enabled elements, measured states; its calibration file is not read)" }],
    options: {
      data: { type: "string", demandOption: true, describe: "readings: rev element,phase_code,power_db[,frequency_hz]; field element,amplitude_db,phase_deg[,frequency_hz]" },
      method: { type: "string", demandOption: true, describe: "rev or field" },
      "probe-direction": { type: "string", describe: "far-field probe direction AZ,EL in degrees (default 0,0: boresight)" },
      "probe-position": { type: "string", describe: "near-field probe point X,Y,Z in metres, array coordinates" },
      o: { alias: "out", type: "string", default: "cal.csv", describe: "calibration file to write" },
    },
    examples: [
      ["$0 calibrate scenario.json --data range.csv --method rev -o cal.csv", "REV readings, far-field probe at boresight → cal.csv"],
      ["$0 calibrate scenario.json --data scan.csv --method field --probe-position 0,0,0.5", "per-channel fields read 0.5 m in front of the array"],
    ],
    run: async (a, io) =>
      (await import("./calibrate.js")).calibrateCommand(io, {
        scenario: String(a.scenario),
        data: String(a.data),
        method: String(a.method),
        probeDirection: opt(a["probe-direction"]),
        probePosition: opt(a["probe-position"]),
        out: String(a.o),
      }),
  },
  diff: {
    command: "diff <dirA> <dirB>",
    describe: "word-level changes between two builds (exit 1 when they differ)",
    line: "diff <dirA> <dirB> [-o dir]",
    positionals: [
      { name: "dirA", type: "string", demandOption: true, describe: "the earlier build folder" },
      { name: "dirB", type: "string", demandOption: true, describe: "the later build folder" },
    ],
    options: { o: { alias: "out", type: "string", describe: "write changes.csv and diff.json into this folder" } },
    examples: [
      ["$0 diff build-1 build-2", "summary of the changed words (exit 1 when any changed)"],
      ["$0 diff build-1 build-2 -o changes", "also every changed word in changes/changes.csv"],
    ],
    run: async (a, io) => (await import("./diff.js")).diffCommand(io, String(a.dirA), String(a.dirB), a.o === undefined ? undefined : String(a.o)),
  },
  verify: {
    command: "verify <dir>",
    describe: "re-read a build and check it end to end (exit 1 on any mismatch)",
    line: "verify <dir>",
    positionals: [{ name: "dir", type: "string", demandOption: true, describe: "the build folder" }],
    options: { jobs: JOBS_OPTION },
    examples: [["$0 verify build-2", "exit 0: every file regenerated from the recorded inputs is identical, the manifest too"]],
    run: async (a, io) => {
      const jobs = jobsOption(a.jobs);
      return (await import("./verify.js")).verifyCommand(io, String(a.dir), jobs);
    },
  },
  report: {
    command: "report <dir>",
    describe: "a self-contained HTML report of a build and/or sweep folder",
    line: "report <dir> [-o file]",
    positionals: [{ name: "dir", type: "string", demandOption: true, describe: "a build or sweep folder" }],
    options: {
      o: { alias: "out", type: "string", describe: "report file (default: DIR/report.html)" },
      beam: { type: "number", describe: "beam to show first (default: the one with the largest sidelobe rise)" },
      frequency: { type: "string", describe: 'frequency to show first: an index (0, 1 …) or a frequency with its unit ("28 GHz")' },
    },
    examples: [
      ["$0 report build-2", "build-2/report.html"],
      ['$0 report build-2 --beam 40 --frequency "28 GHz"', "open at beam 40 of the 28 GHz table"],
    ],
    run: async (a, io) => {
      // ≥ 0 here; past the build's last beam is refused with its beam count (report/page.ts)
      const beam = a.beam === undefined ? null : wholeOption("--beam", a.beam, 0);
      return (await import("./report.js")).reportCommand(io, { dir: String(a.dir), out: opt(a.o), beam, frequency: opt(a.frequency) });
    },
  },
  help: {
    command: "help [command]",
    describe: "show the help of one command (or of steercode)",
    line: "help [command]",
    positionals: [{ name: "command", type: "string", describe: "a command name, e.g. build" }],
    options: {},
    examples: [["$0 help build", "options and examples of build"]],
  },
};

/** Each command's usage line (for messages), completion included. */
export const COMMAND_LINES: Record<string, string> = { ...Object.fromEntries(Object.entries(COMMAND_SPECS).map(([k, c]) => [k, c.line])), completion: "completion" };
export const COMMANDS = Object.keys(COMMAND_LINES);
