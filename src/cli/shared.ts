/** What every command shares: output (prose or one JSON document), progress, safety text. */
import { styleText } from "node:util";
import { createRequire } from "node:module";
import { stableJson } from "../io/json.js";

export const SAFETY = [
  "RF safety: a steered transmit beam concentrates RF power. Keep people outside the",
  "exposure limits that apply to you (e.g. your national RF exposure rules) along every",
  "beam in the table; verify new tables at low power or on receive first; defer to local",
  "codes and licensed practice.",
].join("\n");

export interface Io {
  json: boolean;
  /** false: the stream is full (process.stdout: wait for "drain" before writing much more) */
  stdout: (s: string) => boolean | void;
  stderr: (s: string) => void;
  stderrIsTty: boolean;
}

export function defaultIo(json: boolean): Io {
  return {
    json,
    stdout: (s) => process.stdout.write(s),
    stderr: (s) => process.stderr.write(s),
    stderrIsTty: !!process.stderr.isTTY,
  };
}

export function printJson(io: Io, doc: unknown): void {
  io.stdout(stableJson(doc, null, 2) + "\n");
}

/**
 * Text from an input (a scenario name, a calibration comment, a cell quoted in a message)
 * as it may reach a terminal: control characters (C0 but tab and newline, DEL, C1) as
 * \uXXXX escapes. A name holding ESC [2J cleared the screen of whoever ran `check`, and
 * ESC sequences in a cell could recolour or hide the message quoting it.
 */
export function printable(text: string): string {
  return text.replace(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, "0")}`);
}

export function warn(io: Io, text: string): string {
  return io.stderrIsTty ? styleText("yellow", text, { stream: process.stderr }) : text;
}

/** A progress bar on stderr, only when stderr is a TTY. */
export function progress(io: Io, label: string): { update: (done: number, total: number) => void; stop: () => void } {
  if (!io.stderrIsTty) return { update: () => {}, stop: () => {} };
  // loaded only for a terminal: it is not needed (nor its start-up cost) otherwise
  const cliProgress = createRequire(import.meta.url)("cli-progress") as typeof import("cli-progress");
  // `${label} {bar} {percentage}% | {value}/{total} beams | {eta}s` written as cli-progress' own formatter
  // writes it, without that formatter's string-width measure of every frame (its emoji regex is the
  // costly part; the measure only serves centre and right alignment, and this bar is left-aligned)
  const F = cliProgress.Format;
  const value = F.ValueFormat as unknown as (v: number | string, options: import("cli-progress").Options, type: string) => string;
  const format: import("cli-progress").GenericFormatter = (options, params) =>
    `${label} ${F.BarFormat(params.progress, options)} ${value(String(Math.floor(params.progress * 100)), options, "percentage")}% | ${value(params.value, options, "value")}/${value(params.total, options, "total")} beams | ${value(params.eta, options, "eta")}s`;
  const bar = new cliProgress.SingleBar({ format, stream: process.stderr, hideCursor: true, clearOnComplete: true }, cliProgress.Presets.shades_classic);
  let started = false;
  return {
    update(done, total) {
      if (!started) {
        bar.start(total, 0);
        started = true;
      }
      bar.update(done);
    },
    stop() {
      if (started) bar.stop();
    },
  };
}

export function fmt(x: number | null, digits = 2): string {
  return x === null || !Number.isFinite(x) ? "n/a" : x.toFixed(digits);
}
