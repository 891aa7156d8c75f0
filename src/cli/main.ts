/**
 * The command line. The only place that turns typed errors into messages and exit
 * codes: 0 success, 1 a check found a problem, 2 bad input or usage.
 */
import yargs from "yargs";
import { InputError, formatProblem } from "../core/errors.js";
import { UsageError } from "./usage.js";
import { defaultIo } from "./shared.js";
import { availableParallelism } from "node:os";
import { toolVersion } from "../io/version.js";


/** --jobs N: threads for the analysis in all, the main thread included (README). */
const JOBS_OPTION = { type: "number", default: availableParallelism(), describe: "threads for the analysis, the main thread included" } as const;

function jobsOption(raw: unknown): number {
  const jobs = Number(raw);
  if (!Number.isInteger(jobs) || jobs < 1 || jobs > 256) throw new UsageError(`--jobs: expected a whole number from 1 to 256, got ${String(raw)}`);
  return jobs;
}

/** Exit code a command reports through this, so that handlers can return 0/1. */
export async function main(argv: string[]): Promise<number> {
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
      builder: (y) => y.positional("dir", { type: "string", default: "steercode-demo" }),
      handler: (a) => run(async () => (await import("./init.js")).initCommand(io, String(a.dir)))(),
    })
    .command({
      command: "check <scenario>",
      describe: "validate a scenario; print derived facts and warnings",
      builder: (y) => y.positional("scenario", { type: "string", demandOption: true }),
      handler: (a) => run(async () => (await import("./check.js")).checkCommand(io, String(a.scenario)))(),
    })
    .command({
      command: "build <scenario>",
      describe: "write the beam tables (and beams.csv unless --no-analysis)",
      builder: (y) =>
        y
          .positional("scenario", { type: "string", demandOption: true })
          .option("o", { alias: "out", type: "string", describe: "output folder", default: "steercode-build" })
          .option("jobs", JOBS_OPTION)
          .option("analysis", { type: "boolean", default: true, describe: "write beams.csv (--no-analysis: tables only)" })
          .option("compare", { type: "string", describe: "an earlier build: write its word-level changes (changes.csv, diff.json) beside the new one" }),
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
          .positional("scenario", { type: "string", demandOption: true })
          .option("phase-bits", { type: "string", default: "3..8", describe: "bit depths: a range 3..8 or a list 3,4,6" })
          .option("atten-step", { type: "string", describe: "attenuator steps in dB, e.g. 0.25,0.5,1 (default: the scenario's)" })
          .option("quantizer", { type: "string", describe: "nearest, randomized or both (nearest,randomized)" })
          .option("o", { alias: "out", type: "string", default: "steercode-sweep", describe: "output folder" })
          .option("jobs", JOBS_OPTION),
      handler: (a) =>
        run(async () => {
          const jobs = jobsOption(a.jobs);
          return (await import("./sweep.js")).sweepCommand(io, { scenario: String(a.scenario), out: String(a.o), phaseBits: String(a["phase-bits"]), attenStep: a["atten-step"] === undefined ? null : String(a["atten-step"]), quantizer: a.quantizer === undefined ? null : String(a.quantizer), jobs });
        })(),
    })
    .command({
      command: "diff <dirA> <dirB>",
      describe: "word-level changes between two builds (exit 1 when they differ)",
      builder: (y) =>
        y
          .positional("dirA", { type: "string", demandOption: true })
          .positional("dirB", { type: "string", demandOption: true })
          .option("o", { alias: "out", type: "string", describe: "write changes.csv and diff.json into this folder" }),
      handler: (a) => run(async () => (await import("./diff.js")).diffCommand(io, String(a.dirA), String(a.dirB), a.o === undefined ? undefined : String(a.o)))(),
    })
    .command({
      command: "verify <dir>",
      describe: "re-read a build and check it end to end (exit 1 on any mismatch)",
      builder: (y) => y.positional("dir", { type: "string", demandOption: true }),
      handler: (a) => run(async () => (await import("./verify.js")).verifyCommand(io, String(a.dir)))(),
    })
    .command({
      command: "report <dir>",
      describe: "a self-contained HTML report of a build and/or sweep folder",
      builder: (y) =>
        y
          .positional("dir", { type: "string", demandOption: true })
          .option("o", { alias: "out", type: "string", describe: "report file (default: DIR/report.html)" })
          .option("beam", { type: "number", describe: "beam to show (default: the one with the largest sidelobe rise)" })
          .option("frequency", { type: "number", describe: "frequency index to show (default: that of the chosen beam, else 0)" }),
      handler: (a) =>
        run(async () => {
          for (const k of ["beam", "frequency"] as const)
            if (a[k] !== undefined && (!Number.isInteger(a[k]) || (a[k] as number) < 0)) throw new UsageError(`--${k}: expected a whole number ≥ 0, got ${String(a[k])}`);
          return (await import("./report.js")).reportCommand(io, { dir: String(a.dir), out: a.o === undefined ? null : String(a.o), beam: a.beam === undefined ? null : Number(a.beam), frequency: a.frequency === undefined ? null : Number(a.frequency) });
        })(),
    })
    .demandCommand(1, "expected a command: init, check, build, sweep, diff, verify or report")
    .strict()
    .version(toolVersion())
    .help()
    .exitProcess(false)
    .fail((msg, err) => {
      if (err) throw err;
      throw new UsageError(msg);
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
      process.stderr.write(`steercode: ${e.message}\nsee: steercode --help\n`);
      return 2;
    }
    const msg = e instanceof Error ? e.message : String(e);
    process.stderr.write(`steercode: internal error: ${msg}\n`);
    if (process.env.STEERCODE_DEBUG && e instanceof Error) process.stderr.write(String(e.stack) + "\n");
    return 3;
  }
}
