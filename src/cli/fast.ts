/**
 * The fast path of the command line: an ordinary invocation (a known command, its
 * declared options spelt as declared, the right number of positionals) is parsed with
 * yargs-parser (the parser yargs itself uses) from the command table, without loading
 * yargs and its help machinery. Anything else — help, completion, a usage error, an
 * unusual spelling — returns null and goes to the full yargs command line
 * (yargs-cli.ts), so every message stays yargs'. Accepting less is always safe; the
 * one rule is that what this accepts, yargs accepts with the same values (tested in
 * test/cli/fast.test.ts against yargs).
 */
import parse from "yargs-parser";
import { COMMAND_SPECS, GLOBAL, type Args, type CommandSpec, type OptionSpec } from "./commands.js";

export type FastParse = { spec: CommandSpec; args: Args } | null;

/** Words that mean yargs' own machinery wherever they appear. */
const RESERVED = new Set(["help", "completion", "--get-yargs-completions"]);

const camel = (s: string) => s.replace(/-([a-z])/g, (_, c: string) => c.toUpperCase());

export function fastParse(argv: readonly string[]): FastParse {
  const at = argv.findIndex((x) => !x.startsWith("-"));
  if (at < 0) return null;
  for (let i = 0; i < at; i++) if (argv[i] !== "--json") return null;
  const name = argv[at]!;
  if (!Object.hasOwn(COMMAND_SPECS, name)) return null;
  const spec = COMMAND_SPECS[name]!;
  if (!spec.run) return null;
  const options: Record<string, OptionSpec> = { ...GLOBAL, ...spec.options };
  const spelt = new Map<string, OptionSpec>();
  for (const [k, o] of Object.entries(options)) {
    spelt.set(k, o);
    if (o.alias) spelt.set(o.alias, o);
  }
  // every option token spelt exactly as declared: --name, --name=value, --no-name (booleans), -x
  for (const a of argv) {
    if (RESERVED.has(a)) return null;
    if (!a.startsWith("-")) continue;
    if (a.startsWith("--")) {
      const eq = a.indexOf("=");
      const n = a.slice(2, eq < 0 ? undefined : eq);
      if (n.length >= 2 && spelt.has(n)) continue;
      if (eq < 0 && n.startsWith("no-") && spelt.get(n.slice(3))?.type === "boolean") continue;
      return null;
    }
    if (a.length !== 2 || !spelt.has(a.slice(1))) return null;
  }
  const string: string[] = [], boolean: string[] = [];
  const alias: Record<string, string[]> = {};
  const defaults: Record<string, unknown> = {};
  for (const [k, o] of Object.entries(options)) {
    // a number option as its text, read by the command (option-values.ts): yargs-parser's number type is Number("") = 0, Number("0x10") = 16
    (o.type === "boolean" ? boolean : string).push(k);
    if (o.alias) alias[k] = [o.alias];
    // a value option's default is filled in below, when it is not given: given with no value after it, it is "" (yargs-cli.ts alike)
    if (o.type === "boolean" && o.default !== undefined) defaults[k] = o.default;
  }
  const r = parse.detailed([...argv], { string, boolean, alias, default: defaults, configuration: { "parse-positional-numbers": false } });
  if (r.error) return null;
  const parsed = r.argv as Record<string, unknown> & { _: unknown[] };
  const words = parsed._;
  if (words[0] !== name || !words.every((w) => typeof w === "string")) return null;
  const rest = words.slice(1) as string[];
  const required = spec.positionals.filter((p) => p.demandOption).length;
  if (rest.length < required || rest.length > spec.positionals.length) return null;
  const known = new Set(["_"]);
  for (const k of spelt.keys()) known.add(k).add(camel(k));
  for (const k of Object.keys(parsed)) if (!known.has(k)) return null;
  const args: Args = {};
  for (const [k, o] of Object.entries(options)) {
    let v = parsed[k];
    if (v === undefined) {
      if (o.demandOption) return null;
      if (o.default === undefined) continue;
      v = o.default;
    }
    // one plain value (a number option's too is text); anything else (repeated, empty) is yargs' to judge
    else if (o.type === "boolean" ? typeof v !== "boolean" : typeof v !== "string" || v === "") return null;
    args[k] = v;
    if (o.alias) args[o.alias] = v;
  }
  spec.positionals.forEach((p, i) => {
    const v = rest[i] ?? p.default;
    if (v !== undefined) args[p.name] = v;
  });
  return { spec, args };
}
