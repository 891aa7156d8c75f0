/**
 * The command line. The only place that turns typed errors into messages and exit
 * codes: 0 success, 1 a check found a problem, 2 bad input or usage.
 *
 * An ordinary command line is parsed by the fast path (fast.ts: yargs-parser over the
 * command table in commands.ts); help, completion and anything the fast path does not
 * take go to the full yargs command line (yargs-cli.ts, loaded only then).
 */
import { InputError, formatProblem } from "../core/errors.js";
import { UsageError } from "./usage.js";
import { defaultIo, printable } from "./shared.js";
import { cleanUpOnSignals, isSystemError, writeProblem } from "../io/outdir.js";
import { toolVersion } from "../io/version.js";
import { COMMAND_SPECS, COMMANDS, GLOBAL } from "./commands.js";

const VALUE_OPTIONS = new Set([GLOBAL, ...Object.values(COMMAND_SPECS).map((c) => c.options)].flatMap((o) => Object.entries(o).filter(([, x]) => x.type !== "boolean").map(([k]) => k)));

/**
 * A value option followed by a negative number or number list (`--probe-direction -10,5`,
 * `--probe-position -0.2,0,1`) given as `--name=value`: the parser read "-10,5" as the short
 * flags -1, -0, … and said "unknown argument 0 (did you mean -o?)", naming neither the option
 * nor the value. Only long options, only before `--`.
 */
export function attachNumberValues(argv: readonly string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === "--") return out.concat(argv.slice(i));
    const next = argv[i + 1];
    if (next !== undefined && a.startsWith("--") && VALUE_OPTIONS.has(a.slice(2)) && /^-\.?\d/.test(next)) {
      out.push(`${a}=${next}`);
      i++;
    } else out.push(a);
  }
  return out;
}

/** Exit code a command reports through this, so that handlers can return 0/1. */
export async function main(given: string[]): Promise<number> {
  cleanUpOnSignals();
  const argv = attachNumberValues(given);
  const json = argv.includes("--json");
  const io = defaultIo(json);
  try {
    // `--version` (or `-v`) alone: the version as yargs prints it, nothing else loaded
    if (argv.length === 1 && (argv[0] === "--version" || argv[0] === "-v")) {
      process.stdout.write(toolVersion() + "\n");
      return 0;
    }
    const fast = (await import("./fast.js")).fastParse(argv);
    if (fast) return await fast.spec.run!(fast.args, io);
    return await (await import("./yargs-cli.js")).runYargs(argv, io, main);
  } catch (e) {
    if (e instanceof InputError) {
      if (json) process.stdout.write(JSON.stringify({ ok: false, problems: e.problems, messages: e.problems.map(formatProblem) }, null, 2) + "\n");
      process.stderr.write(e.problems.map((p) => `steercode: ${printable(formatProblem(p))}`).join("\n") + "\n");
      return 2;
    }
    if (e instanceof UsageError) {
      if (json) process.stdout.write(JSON.stringify({ ok: false, problems: [{ message: e.message }] }, null, 2) + "\n");
      const first = argv.find((x) => !x.startsWith("-"));
      process.stderr.write(`steercode: ${printable(e.message)}\nsee: steercode ${first !== undefined && COMMANDS.includes(first) && first !== "help" ? `help ${first}` : "--help"}\n`);
      return 2;
    }
    if (isSystemError(e)) {
      // the operating system refused (permissions, a full disk, a file removed meanwhile): exit 2, located
      const p = writeProblem(e, e.path ?? "", "cannot complete").problems[0]!;
      const msg = `${p.file ? `${p.file}: ` : ""}cannot complete: ${p.message.replace(/^cannot complete: /, "").replace(/; nothing was written.*$/, "")}`;
      if (json) process.stdout.write(JSON.stringify({ ok: false, problems: [{ ...(e.path ? { file: e.path } : {}), message: msg }] }, null, 2) + "\n");
      process.stderr.write(`steercode: ${printable(msg)}\n`);
      return 2;
    }
    const msg = e instanceof Error ? e.message : String(e);
    process.stderr.write(`steercode: internal error: ${printable(msg)}\n`);
    if (process.env.STEERCODE_DEBUG && e instanceof Error) process.stderr.write(String(e.stack) + "\n");
    return 3;
  }
}
