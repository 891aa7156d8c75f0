/**
 * The command line. The only place that turns typed errors into messages and exit
 * codes: 0 success, 1 a check found a problem, 2 bad input or usage.
 */
import yargs from "yargs";
import { InputError, formatProblem } from "../core/errors.js";
import { UsageError } from "./usage.js";
import { defaultIo } from "./shared.js";
import { cleanUpOnSignals, isSystemError, writeProblem } from "../io/outdir.js";
import { levenshtein } from "../core/spelling.js";
import { availableParallelism } from "node:os";
import { toolVersion } from "../io/version.js";


/** --jobs N: threads for the analysis in all, the main thread included (README). */
const JOBS_OPTION = { type: "number", default: availableParallelism(), describe: "threads for the analysis, the main thread included (at most the number of cores)" } as const;

function jobsOption(raw: unknown): number {
  const jobs = Number(raw);
  if (!Number.isInteger(jobs) || jobs < 1 || jobs > 256) throw new UsageError(`--jobs: expected a whole number from 1 to 256, got ${String(raw)}`);
  // more threads than cores only compete for them (and each holds its own analysis buffers)
  const cores = availableParallelism();
  if (jobs > cores) {
    process.stderr.write(`steercode: note: --jobs ${jobs} is more than the ${cores} core(s) of this machine; using ${cores}\n`);
    return cores;
  }
  return jobs;
}

/** Each command's usage line (for messages). */
const COMMAND_LINES: Record<string, string> = {
  init: "init [dir]",
  check: "check <scenario>",
  build: "build <scenario> [-o dir]",
  sweep: "sweep <scenario> [--phase-bits 3..8] [--atten-step 0.25,0.5,1] [-o dir]",
  calibrate: "calibrate <scenario> --data <file.csv> --method rev|field [--probe-direction AZ,EL | --probe-position X,Y,Z] [-o cal.csv]",
  diff: "diff <dirA> <dirB> [-o dir]",
  verify: "verify <dir>",
  report: "report <dir> [-o file]",
  help: "help [command]",
  completion: "completion",
};
const COMMANDS = Object.keys(COMMAND_LINES);

/** The closest of `known` to `word`, or null when none is close. */
function closest(word: string, known: readonly string[]): string | null {
  let best = "", bestD = Infinity;
  for (const k of known) {
    const dd = k.startsWith(word) || word.startsWith(k) ? Math.min(1, levenshtein(word, k)) : levenshtein(word, k);
    if (dd < bestD) [best, bestD] = [k, dd];
  }
  return best && bestD <= Math.max(1, Math.floor(word.length / 3)) ? best : null;
}

const dash = (o: string) => (o.length === 1 ? "-" : "--") + o;
const GLOBAL_OPTIONS = ["help", "version", "json"];

/** yargs' usage messages in our words, with a did-you-mean for mistyped commands and options. */
function explainUsage(msg: string, argv: string[], usage: { getDescriptions?: () => Record<string, unknown> }): string {
  const first = argv.find((x) => !x.startsWith("-"));
  const cmd = /^Did you mean (\S+)\?$/.exec(msg);
  if (cmd) return `unknown command '${first ?? ""}' (did you mean ${cmd[1]}?)`;
  const unknown = /^Unknown arguments?: (.+)$/.exec(msg);
  if (unknown) {
    const words = unknown[1]!.split(", ");
    if (first !== undefined && words[0] === first && !COMMANDS.includes(first)) {
      const c = closest(first, COMMANDS);
      return `unknown command '${first}'${c ? ` (did you mean ${c}?)` : ""}; commands: ${COMMANDS.join(", ")}`;
    }
    const options = Object.keys(usage.getDescriptions?.() ?? {});
    return words
      .map((w) => {
        const c = closest(w, options);
        return `unknown ${argv.includes(dash(w)) || argv.some((a) => a.startsWith(dash(w) + "=")) ? "option " + dash(w) : "argument " + w}${c ? ` (did you mean ${dash(c)}?)` : ""}`;
      })
      .join("; ");
  }
  if (/^Not enough non-option arguments/.test(msg) && first !== undefined) return `${first}: missing argument; usage: steercode ${COMMAND_LINES[first] ?? first}`;
  if (first === undefined) {
    const opt = argv.find((a) => a.startsWith("--") && !GLOBAL_OPTIONS.includes(a.slice(2)));
    if (opt) {
      const c = closest(opt.slice(2), GLOBAL_OPTIONS);
      return `unknown option ${opt}${c ? ` (did you mean --${c}?)` : ""}; ${msg}`;
    }
  }
  return msg;
}

/** Exit code a command reports through this, so that handlers can return 0/1. */
export async function main(argv: string[]): Promise<number> {
  cleanUpOnSignals();
  let code = 0;
  const json = argv.includes("--json");
  const io = defaultIo(json);
  const run = (fn: () => number | Promise<number>) => async () => {
    code = await fn();
  };
  const parser = yargs(argv)
    .scriptName("steercode")
    .usage("$0 <command> [options]\n\nBeam tables for phased-array firmware.")
    .option("json", { type: "boolean", default: false, describe: "print one JSON document on stdout instead of prose" })
    .command({
      command: "init [dir]",
      describe: "write a ready demo scenario (invented data)",
      builder: (y) =>
        y
          .positional("dir", { type: "string", default: "steercode-demo", describe: "folder to write the demo scenario and its calibration file into" })
          .example("$0 init my-array", "write my-array/scenario.json and my-array/cal.csv"),
      handler: (a) => run(async () => (await import("./init.js")).initCommand(io, String(a.dir)))(),
    })
    .command({
      command: "check <scenario>",
      describe: "validate a scenario; print derived facts and warnings",
      builder: (y) =>
        y
          .positional("scenario", { type: "string", demandOption: true, describe: "the scenario file (JSON, steercode-scenario/1)" })
          .option("bus-clock", { type: "string", describe: "serial clock that loads the device images, e.g. 10MHz: check prints each device's full-load time" })
          .option("bus-word-bits", { type: "number", describe: "bits clocked per word (default: the word's bytes × 8)" })
          .option("bus-overhead-bits", { type: "number", default: 0, describe: "framing bits per word on the bus (command, address, gaps)" })
          .example("$0 check fixtures/demo/scenario.json", "every problem at once, then wavelengths, grating-lobe limits, table size")
          .example("$0 check scenario.json --bus-clock 10MHz --bus-overhead-bits 8", "with devices: each image's size and full-load time over the bus"),
      handler: (a) =>
        run(async () => {
          const m = await import("./check.js");
          return m.checkCommand(io, String(a.scenario), m.busOptions(a["bus-clock"], a["bus-word-bits"], a["bus-overhead-bits"]));
        })(),
    })
    .command({
      command: "build <scenario>",
      describe: "write the beam tables (and beams.csv unless --no-analysis)",
      builder: (y) =>
        y
          .positional("scenario", { type: "string", demandOption: true, describe: "the scenario file (JSON, steercode-scenario/1)" })
          .option("o", { alias: "out", type: "string", describe: "output folder (replaced only if it is an earlier build)", default: "steercode-build" })
          .option("jobs", JOBS_OPTION)
          .option("analysis", { type: "boolean", default: true, describe: "write beams.csv (--no-analysis: tables only)" })
          .option("compare", { type: "string", describe: "an earlier build folder: write the word-level changes (changes.csv, diff.json) into the new one" })
          .example("$0 build scenario.json -o build-2", "tables, beams.csv and manifest.json in build-2/")
          .example("$0 build scenario.json -o build-2 --compare build-1", "also: which words changed since build-1")
          .example("$0 build scenario.json --no-analysis", "tables only (fastest)"),
      handler: (a) =>
        run(async () => {
          const jobs = jobsOption(a.jobs);
          return (await import("./build.js")).buildCommand(io, { scenario: String(a.scenario), out: String(a.o), jobs, analysis: a.analysis !== false, compare: a.compare === undefined ? null : String(a.compare) });
        })(),
    })
    .command({
      command: "sweep <scenario>",
      describe: "bit-depth trade-off: the whole grid for every phase-bit depth and attenuator step",
      builder: (y) =>
        y
          .positional("scenario", { type: "string", demandOption: true, describe: "the scenario file (JSON, steercode-scenario/1)" })
          .option("phase-bits", { type: "string", default: "3..8", describe: "bit depths: a range 3..8 or a list 3,4,6" })
          .option("atten-step", { type: "string", describe: "attenuator steps in dB, e.g. 0.25,0.5,1 (default: the scenario's)" })
          .option("quantizer", { type: "string", describe: "nearest, randomized, optimized or several, comma-separated (nearest,randomized,optimized)" })
          .option("o", { alias: "out", type: "string", default: "steercode-sweep", describe: "output folder (replaced only if it is an earlier sweep)" })
          .option("jobs", JOBS_OPTION)
          .example("$0 sweep scenario.json --phase-bits 3..7 --atten-step 0.25,0.5,1", "every part over the whole grid: sweep.csv, sweep.json, sweep.svg"),
      handler: (a) =>
        run(async () => {
          const jobs = jobsOption(a.jobs);
          return (await import("./sweep.js")).sweepCommand(io, { scenario: String(a.scenario), out: String(a.o), phaseBits: String(a["phase-bits"]), attenStep: a["atten-step"] === undefined ? null : String(a["atten-step"]), quantizer: a.quantizer === undefined ? null : String(a.quantizer), jobs });
        })(),
    })
    .command({
      command: "calibrate <scenario>",
      describe: "calibration offsets from range readings (REV or per-channel field) → cal.csv",
      builder: (y) =>
        y
          .positional("scenario", { type: "string", demandOption: true, describe: "the scenario file (geometry, enabled elements, measured states; its calibration file is not read)" })
          .option("data", { type: "string", demandOption: true, describe: "readings: rev element,phase_code,power_db[,frequency_hz]; field element,amplitude_db,phase_deg[,frequency_hz]" })
          .option("method", { type: "string", demandOption: true, describe: "rev or field" })
          .option("probe-direction", { type: "string", describe: "far-field probe direction AZ,EL in degrees (default 0,0: boresight)" })
          .option("probe-position", { type: "string", describe: "near-field probe point X,Y,Z in metres, array coordinates" })
          .option("o", { alias: "out", type: "string", default: "cal.csv", describe: "calibration file to write" })
          .example("$0 calibrate scenario.json --data range.csv --method rev -o cal.csv", "REV readings, far-field probe at boresight → cal.csv")
          .example("$0 calibrate scenario.json --data scan.csv --method field --probe-position 0,0,0.5", "per-channel fields read 0.5 m in front of the array"),
      handler: (a) =>
        run(async () =>
          (await import("./calibrate.js")).calibrateCommand(io, {
            scenario: String(a.scenario),
            data: String(a.data),
            method: String(a.method),
            probeDirection: a["probe-direction"] === undefined ? null : String(a["probe-direction"]),
            probePosition: a["probe-position"] === undefined ? null : String(a["probe-position"]),
            out: String(a.o),
          }),
        )(),
    })
    .command({
      command: "diff <dirA> <dirB>",
      describe: "word-level changes between two builds (exit 1 when they differ)",
      builder: (y) =>
        y
          .positional("dirA", { type: "string", demandOption: true, describe: "the earlier build folder" })
          .positional("dirB", { type: "string", demandOption: true, describe: "the later build folder" })
          .option("o", { alias: "out", type: "string", describe: "write changes.csv and diff.json into this folder" })
          .example("$0 diff build-1 build-2", "summary of the changed words (exit 1 when any changed)")
          .example("$0 diff build-1 build-2 -o changes", "also every changed word in changes/changes.csv"),
      handler: (a) => run(async () => (await import("./diff.js")).diffCommand(io, String(a.dirA), String(a.dirB), a.o === undefined ? undefined : String(a.o)))(),
    })
    .command({
      command: "verify <dir>",
      describe: "re-read a build and check it end to end (exit 1 on any mismatch)",
      builder: (y) =>
        y
          .positional("dir", { type: "string", demandOption: true, describe: "the build folder" })
          .option("jobs", JOBS_OPTION)
          .example("$0 verify build-2", "exit 0: every file regenerated from the recorded inputs is identical, the manifest too"),
      handler: (a) =>
        run(async () => {
          const jobs = jobsOption(a.jobs);
          return (await import("./verify.js")).verifyCommand(io, String(a.dir), jobs);
        })(),
    })
    .command({
      command: "report <dir>",
      describe: "a self-contained HTML report of a build and/or sweep folder",
      builder: (y) =>
        y
          .positional("dir", { type: "string", demandOption: true, describe: "a build or sweep folder" })
          .option("o", { alias: "out", type: "string", describe: "report file (default: DIR/report.html)" })
          .option("beam", { type: "number", describe: "beam to show first (default: the one with the largest sidelobe rise)" })
          .option("frequency", { type: "string", describe: "frequency to show first: an index (0, 1 …) or a frequency with its unit (\"28 GHz\")" })
          .example("$0 report build-2", "build-2/report.html")
          .example("$0 report build-2 --beam 40 --frequency \"28 GHz\"", "open at beam 40 of the 28 GHz table"),
      handler: (a) =>
        run(async () => {
          if (a.beam !== undefined && (!Number.isInteger(a.beam) || a.beam < 0)) throw new UsageError(`--beam: expected a whole number ≥ 0, got ${String(a.beam)}`);
          return (await import("./report.js")).reportCommand(io, { dir: String(a.dir), out: a.o === undefined ? null : String(a.o), beam: a.beam === undefined ? null : Number(a.beam), frequency: a.frequency === undefined ? null : String(a.frequency) });
        })(),
    })
    .command({
      command: "help [command]",
      describe: "show the help of one command (or of steercode)",
      builder: (y) => y.positional("command", { type: "string", describe: "a command name, e.g. build" }).example("$0 help build", "options and examples of build"),
      handler: (a) =>
        run(async () => {
          const cmd = a.command === undefined ? [] : [String(a.command)];
          if (cmd.length && !COMMANDS.includes(cmd[0]!)) {
            const c = closest(cmd[0]!, COMMANDS);
            throw new UsageError(`help ${cmd[0]}: unknown command${c ? ` (did you mean ${c}?)` : ""}; commands: ${COMMANDS.join(", ")}`);
          }
          return main([...cmd, "--help"]);
        })(),
    })
    .completion("completion", "print a bash/zsh completion script (add `steercode completion >> ~/.bashrc`)")
    .demandCommand(1, `expected a command: ${COMMANDS.join(", ")}`)
    .recommendCommands()
    .strict()
    .version("version", "print steercode's version", toolVersion())
    .alias("v", "version")
    .help("help", "show this help (also: steercode help <command>)")
    .alias("h", "help")
    .wrap(Math.min(110, process.stdout.columns || 100))
    .epilog("Exit codes: 0 success, 1 a check found a problem, 2 bad input or usage. Docs: README.md.")
    .exitProcess(false)
    .fail((msg, err, usage) => {
      if (err) throw err;
      throw new UsageError(explainUsage(msg ?? "", argv, usage as unknown as { getDescriptions?: () => Record<string, unknown> }));
    });
  try {
    await parser.parseAsync();
    return code;
  } catch (e) {
    if (e instanceof InputError) {
      if (json) process.stdout.write(JSON.stringify({ ok: false, problems: e.problems, messages: e.problems.map(formatProblem) }, null, 2) + "\n");
      process.stderr.write(e.problems.map((p) => `steercode: ${formatProblem(p)}`).join("\n") + "\n");
      return 2;
    }
    if (e instanceof UsageError) {
      if (json) process.stdout.write(JSON.stringify({ ok: false, problems: [{ message: e.message }] }, null, 2) + "\n");
      const first = argv.find((x) => !x.startsWith("-"));
      process.stderr.write(`steercode: ${e.message}\nsee: steercode ${first !== undefined && COMMANDS.includes(first) && first !== "help" ? `help ${first}` : "--help"}\n`);
      return 2;
    }
    if (isSystemError(e)) {
      // the operating system refused (permissions, a full disk, a file removed meanwhile): exit 2, located
      const p = writeProblem(e, e.path ?? "", "cannot complete").problems[0]!;
      const msg = `${p.file ? `${p.file}: ` : ""}cannot complete: ${p.message.replace(/^cannot complete: /, "").replace(/; nothing was written.*$/, "")}`;
      if (json) process.stdout.write(JSON.stringify({ ok: false, problems: [{ ...(e.path ? { file: e.path } : {}), message: msg }] }, null, 2) + "\n");
      process.stderr.write(`steercode: ${msg}\n`);
      return 2;
    }
    const msg = e instanceof Error ? e.message : String(e);
    process.stderr.write(`steercode: internal error: ${msg}\n`);
    if (process.env.STEERCODE_DEBUG && e instanceof Error) process.stderr.write(String(e.stack) + "\n");
    return 3;
  }
}
