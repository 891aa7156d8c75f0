/**
 * The full yargs command line, built from the command table (commands.ts). Loaded only
 * when the fast path (fast.ts) does not take a command line: help, completion, the
 * version, and every usage error (so their text is yargs' own, in our words).
 */
import yargs, { type Argv, type Options } from "yargs";
import { UsageError } from "./usage.js";
import { levenshtein } from "../core/spelling.js";
import { toolVersion } from "../io/version.js";
import { COMMAND_LINES, COMMAND_SPECS, COMMANDS, GLOBAL, type CommandSpec, type OptionSpec } from "./commands.js";
import type { Io } from "./shared.js";

/** The closest of `known` to `word`, or null when none is close. */
export function closest(word: string, known: readonly string[]): string | null {
  let best = "", bestD = Infinity;
  for (const k of known) {
    const dd = k.startsWith(word) || word.startsWith(k) ? Math.min(1, levenshtein(word, k)) : levenshtein(word, k);
    if (dd < bestD) [best, bestD] = [k, dd];
  }
  return best && bestD <= Math.max(1, Math.floor(word.length / 3)) ? best : null;
}

const COMPLETION_DESCRIBE = "print a bash/zsh completion script (add `steercode completion >> ~/.bashrc`); takes no arguments";
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

/**
 * An option as yargs is given it. A number option is parsed as its text (`string`; the help
 * still says [number]) and read by the command (option-values.ts). A value option's default is
 * filled in by the handler, not by yargs (`defaultDescription` shows it as yargs would), so that
 * the option given with no value after it (`--jobs` last, `--beam=`) is "" and refused, never
 * its default; the fast path (fast.ts) does the same.
 */
function yargsOption(o: OptionSpec): Options {
  if (o.type === "boolean") return o;
  const { default: d, ...rest } = o;
  return { ...rest, ...(o.type === "number" ? { string: true } : {}), ...(d !== undefined ? { defaultDescription: typeof d === "string" ? JSON.stringify(d) : String(d) } : {}) };
}

function builder(spec: CommandSpec) {
  return (y: Argv) => {
    for (const { name, ...p } of spec.positionals) y = y.positional(name, p);
    for (const [name, o] of Object.entries(spec.options)) y = y.option(name, yargsOption(o));
    for (const [cmd, text] of spec.examples) y = y.example(cmd, text);
    return y;
  };
}

/**
 * Parses `argv` with yargs and runs the command; `main` is called back for `help <command>`.
 * `runner` replaces a command's own run (tests compare what yargs parsed with the fast path).
 */
export async function runYargs(argv: string[], io: Io, main: (argv: string[]) => Promise<number>, runner?: (spec: CommandSpec, a: Record<string, unknown>) => Promise<number>): Promise<number> {
  let code = 0;
  if (argv.find((x) => !x.startsWith("-")) === "completion" && !argv.includes("--get-yargs-completions")) {
    // yargs printed the script for `completion foo` (and then exit 2), and for `completion -h` instead of help
    const rest = argv.slice(argv.indexOf("completion") + 1).concat(argv.slice(0, argv.indexOf("completion")));
    const extra = rest.filter((x) => x !== "--json" && x !== "-h" && x !== "--help");
    if (extra.length) throw new UsageError(`completion takes no arguments, got ${extra.join(" ")}; usage: steercode completion >> ~/.bashrc (prints a bash/zsh completion script)`);
    if (rest.includes("-h") || rest.includes("--help")) {
      process.stdout.write(`steercode completion\n\n${COMPLETION_DESCRIBE}\n\nExamples:\n  steercode completion >> ~/.bashrc  add steercode's completion to bash\n`);
      return 0;
    }
  }
  let parser = yargs(argv)
    .scriptName("steercode")
    .usage("$0 <command> [options]\n\nBeam tables for phased-array firmware.");
  for (const [name, o] of Object.entries(GLOBAL)) parser = parser.option(name, o);
  for (const spec of Object.values(COMMAND_SPECS)) {
    const run = spec.run;
    parser = parser.command({
      command: spec.command,
      describe: spec.describe,
      builder: builder(spec),
      handler: async (a) => {
        if (run) {
          for (const [name, o] of Object.entries(spec.options))
            if (o.type !== "boolean" && o.default !== undefined && a[name] === undefined) {
              a[name] = o.default;
              if (o.alias) a[o.alias] = o.default;
            }
          // yargs reads --no-<name> as false for every option: `build --no-o` wrote a folder named "false"
          for (const [name, o] of Object.entries({ ...GLOBAL, ...spec.options })) {
            const v = a[name];
            if (o.type === "boolean" || !(Array.isArray(v) ? v : [v]).some((x) => typeof x === "boolean")) continue;
            const typed = o.alias && argv.some((x) => x === `--no-${o.alias}`) ? o.alias : name;
            throw new UsageError(`--no-${typed}: ${dash(typed)} takes a value; only switches (such as --no-analysis) have a --no- form`);
          }
          // an option given twice became an array that the command joined: `build -o x -o y` wrote a folder named "x,y"
          for (const [name, o] of Object.entries({ ...GLOBAL, ...spec.options })) {
            const v = a[name];
            if (!Array.isArray(v) || (o.type === "boolean" && v.every((x) => x === v[0]))) continue;
            throw new UsageError(`${dash(o.alias && argv.includes(dash(o.alias)) ? o.alias : name)} was given ${v.length} times (${v.map(String).join(", ")}); expected it once`);
          }
          code = await (runner ? runner(spec, a) : run(a, io));
          return;
        }
        // help [command]
        const cmd = a.command === undefined ? [] : [String(a.command)];
        if (cmd.length && !COMMANDS.includes(cmd[0]!)) {
          const c = closest(cmd[0]!, COMMANDS);
          throw new UsageError(`help ${cmd[0]}: unknown command${c ? ` (did you mean ${c}?)` : ""}; commands: ${COMMANDS.join(", ")}`);
        }
        code = await main([...cmd, "--help"]);
      },
    });
  }
  parser = parser
    .completion("completion", COMPLETION_DESCRIBE)
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
  await parser.parseAsync();
  return code;
}
