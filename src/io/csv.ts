/**
 * CSV inputs (header row required). `#` lines before the header are comments and
 * are kept (a calibration file records its date and source there). Parsing uses
 * csv-parse; every problem names the file, the line and the column.
 */
import { createRequire } from "node:module";
import type { Problem } from "../core/errors.js";
import { D } from "../core/exact.js";
import type { InputFile } from "./files.js";

export interface CsvRow {
  line: number;
  cells: RowCells;
}

/** A row's cells by column name (one shared name → index map, not a Map per row: a million rows stay small). */
export class RowCells {
  constructor(
    private readonly values: string[],
    private readonly index: Map<string, number>,
  ) {}
  get(col: string): string | undefined {
    const i = this.index.get(col);
    return i === undefined ? undefined : this.values[i];
  }
}

export interface CsvTable {
  file: string;
  comments: string[];
  header: string[];
  rows: CsvRow[];
}

export interface CsvShape {
  /** Column sets, any one of which must be present in full (e.g. [["az_deg","el_deg"],["u","v"]]). */
  required: string[][];
  optional: string[];
  /** Most data rows the file may hold; reading stops past it. */
  maxRows?: number;
  /** What bounds the rows, for the message. */
  rowsWhat?: string;
}

/** Longest line of a CSV input, and most `#` comment lines before its header. */
export const MAX_CSV_LINE = 4096;
export const MAX_COMMENT_LINES = 100;

export function readCsv(input: InputFile, shape: CsvShape, problems: Problem[]): CsvTable | null {
  const file = input.name;
  const text = input.text;
  // one pass over the lines (LF, CRLF or CR): start of each, and a line past the limit
  // (a file of one 400 MB line) refused before any parsing
  const starts: number[] = [];
  const ends: number[] = [];
  for (let i = 0, start = 0; ; i++) {
    const c = i < text.length ? text.charCodeAt(i) : -1;
    if (c === 10 || c === 13 || c === -1) {
      if (i - start > MAX_CSV_LINE) {
        problems.push({ file, line: starts.length + 1, message: `line longer than ${MAX_CSV_LINE} characters; expected CSV rows of at most ${MAX_CSV_LINE}` });
        return null;
      }
      if (c === -1 && i === start && starts.length > 0) break; // the file ends with a line break
      starts.push(start);
      ends.push(i);
      if (c === -1) break;
      if (c === 13 && text.charCodeAt(i + 1) === 10) i++;
      start = i + 1;
    }
  }
  // `#` comment lines (and blank lines) before the header
  const comments: string[] = [];
  let skip = 0;
  while (skip < starts.length) {
    const t = text.slice(starts[skip], ends[skip]).trim();
    if (!(t.startsWith("#") || (t === "" && skip < starts.length - 1))) break;
    if (t.startsWith("#")) {
      if (comments.length === MAX_COMMENT_LINES) {
        problems.push({ file, line: skip + 1, message: `more than ${MAX_COMMENT_LINES} comment lines before the header; expected at most ${MAX_COMMENT_LINES}` });
        return null;
      }
      comments.push(t.replace(/^#\s?/, ""));
    }
    skip++;
  }
  const limit = shape.maxRows ?? Infinity;
  let records: { record: string[]; info: { lines: number } }[];
  const tooMany = (line: number) => {
    problems.push({ file, line, message: `more than ${limit} data rows; expected at most ${limit}${shape.rowsWhat ? ` (${shape.rowsWhat})` : ""}` });
    return null;
  };
  const blank = (k: number) => {
    for (let i = starts[k]!; i < ends[k]!; i++) {
      const c = text.charCodeAt(i);
      if (c !== 32 && c !== 9) return false;
    }
    return true;
  };
  // count first (cheap): an over-long file is refused before any record is built
  for (let k = skip, n = 0; k < starts.length; k++) if (!blank(k) && ++n > limit + 1) return tooMany(k + 1);
  const body = skip < starts.length ? text.slice(starts[skip]) : "";
  const quoted = body.includes('"');
  if (!quoted) {
    // no quoting: one record per non-blank line, cells split at commas (csv-parse's result for such text, much faster)
    records = [];
    for (let k = skip; k < starts.length; k++)
      if (!blank(k)) records.push({ record: text.slice(starts[k], ends[k]).split(",").map((c) => c.trim()), info: { lines: k + 1 - skip } });
  } else {
    try {
      // csv-parse is loaded only for quoted text (the unquoted split above covers most files)
      const { parse } = createRequire(import.meta.url)("csv-parse/sync") as typeof import("csv-parse/sync");
      records = parse(body, { info: true, skip_empty_lines: true, trim: true, relax_column_count: true, ...(Number.isFinite(limit) ? { to: limit + 2 } : {}) }) as unknown as typeof records;
    } catch (e) {
      const err = e as { lines?: number; message?: string };
      problems.push({ file, ...(err.lines !== undefined ? { line: err.lines + skip } : {}), message: `not valid CSV: ${String(err.message ?? e).replace(/^Invalid Record Length: /, "")}` });
      return null;
    }
    if (records.length > limit + 1) return tooMany(records[records.length - 1]!.info.lines + skip);
  }
  if (records.length === 0) {
    problems.push({ file, message: `expected a header row (${describeShape(shape)}) and data rows; the file is empty` });
    return null;
  }
  const header = records[0]!.record.map((h) => h.trim());
  const headerLine = records[0]!.info.lines + skip;
  const known = new Set([...shape.required.flat(), ...shape.optional]);
  let ok = true;
  const seen = new Set<string>();
  header.forEach((h) => {
    if (seen.has(h)) {
      problems.push({ file, line: headerLine, column: h, message: `column "${h}" appears twice in the header` });
      ok = false;
    }
    seen.add(h);
    if (!known.has(h)) {
      problems.push({ file, line: headerLine, column: h, message: `unknown column "${h}"; expected ${describeShape(shape)}` });
      ok = false;
    }
  });
  const set = shape.required.find((cols) => cols.every((c) => seen.has(c)));
  if (!set) {
    problems.push({ file, line: headerLine, message: `header is "${header.join(",")}"; expected ${describeShape(shape)}` });
    ok = false;
  }
  if (!ok) return null;
  const rows: CsvRow[] = [];
  const index = new Map(header.map((h, i) => [h, i]));
  for (let r = 1; r < records.length; r++) {
    const rec = records[r]!;
    const line = rec.info.lines + skip;
    if (rec.record.length !== header.length) {
      problems.push({ file, line, message: `expected ${header.length} cells (${header.join(",")}), got ${rec.record.length}` });
      continue;
    }
    rows.push({ line, cells: new RowCells(rec.record, index) });
  }
  if (rows.length === 0 && records.length === 1) problems.push({ file, line: headerLine, message: "expected data rows after the header; found none" });
  return { file, comments, header, rows };
}

function describeShape(shape: CsvShape): string {
  const req = shape.required.map((s) => s.join(",")).join(" or ");
  return shape.optional.length ? `columns ${req} (optional: ${shape.optional.join(", ")})` : `columns ${req}`;
}

const NUMBER_RE = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/** A numeric cell: returns its exact text and value, or records a problem. Values beyond `max`/`min` are refused with the text as written (never a rounded value). */
export function numberCell(t: CsvTable, row: CsvRow, col: string, problems: Problem[], opts: { integer?: boolean; min?: number; max?: number } = {}): { text: string; value: number } | null {
  const text = row.cells.get(col);
  if (text === undefined) return null;
  const expected = opts.integer ? "a whole number" : "a number";
  const range = opts.min !== undefined && opts.max !== undefined ? ` from ${opts.min} to ${opts.max}` : opts.min !== undefined ? ` ≥ ${opts.min}` : opts.max !== undefined ? ` ≤ ${opts.max}` : "";
  const bad = () => {
    problems.push({ file: t.file, line: row.line, column: col, message: `expected ${expected}${range}, got "${text.length > 40 ? text.slice(0, 40) + "…" : text}"` });
    return null;
  };
  if (!NUMBER_RE.test(text)) return bad();
  const value = Number(text);
  // A whole number is judged on the text, not on the double it rounds to: "2147483647.0000000001"
  // and "1e-400" are not whole numbers, though Number() makes them 2147483647 and 0. Plain digits
  // are whole as written (decimal.js only for a point or an exponent: ids are most of a big file's cells).
  if (opts.integer && /[.eE]/.test(text) && !new D(text).isInteger()) return bad();
  if (!Number.isFinite(value) || (opts.integer && !Number.isInteger(value)) || (opts.min !== undefined && value < opts.min) || (opts.max !== undefined && value > opts.max)) return bad();
  return { text, value };
}
