/**
 * The values of the command line's number and list options, read from the text as typed.
 * yargs' number type is `Number(text)`: "" and " " were 0, "0x10" 16, "1e3" 1000, and
 * yargs-parser adds a repeated value of 1 to the first (`--jobs 4 --jobs 1` was 5). So both
 * parsers hand a number option over as its text (fast.ts, yargs-cli.ts) and the commands
 * read it with these; an option with no value after it is "" (yargs-cli.ts, fast.ts), never
 * its default.
 */
import { UsageError } from "./usage.js";

/**
 * A whole number in decimal digits (spaces around it allowed) from `min` to `max`: `--jobs`,
 * `--beam`, `--bus-word-bits` … Without `max`, any number a double holds exactly (the caller
 * checks the real bound, e.g. the build's beam count). A number from the command table's
 * defaults is taken as it is.
 */
export function wholeOption(option: string, raw: unknown, min: number, max?: number): number {
  const text = typeof raw === "number" ? String(raw) : typeof raw === "string" ? raw.trim() : "";
  const n = /^\d+$/.test(text) ? Number(text) : NaN;
  if (n >= min && n <= (max ?? Number.MAX_SAFE_INTEGER)) return n;
  const range = max !== undefined ? `from ${min} to ${max}` : n > Number.MAX_SAFE_INTEGER ? `from ${min} to ${Number.MAX_SAFE_INTEGER}` : `≥ ${min}`;
  throw new UsageError(`${option}: expected a whole number ${range} in decimal digits, ${got(raw)}`);
}

/**
 * The items of a comma-separated list option (`--phase-bits 3,4,6`, `--probe-direction 10,0`),
 * each with the spaces around it removed. An empty value or an empty item (`3,,4`, `3,`, `,3`)
 * is refused: it is more likely a value lost in typing than a wish.
 */
export function listOption(option: string, raw: string, expected: string): string[] {
  const items = raw.split(",").map((s) => s.trim());
  if (items.some((s) => s === "")) throw new UsageError(`${option}: expected ${expected}, ${got(raw)}${raw.trim() === "" ? "" : " (an empty item)"}`);
  return items;
}

/** The value as typed, quoted, for a message. */
export function got(raw: unknown): string {
  if (raw === "") return "got an empty string";
  // yargs reads --no-jobs as jobs = false
  if (typeof raw === "boolean") return raw ? "got no value" : "got its --no- form (a value is needed)";
  return `got "${String(raw)}"${typeof raw === "string" && raw.trim() === "" ? " (only spaces)" : ""}`;
}
