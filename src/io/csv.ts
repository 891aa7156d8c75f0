/**
 * CSV inputs (header row required). `#` lines before the header are comments and
 * are kept (a calibration file records its date and source there). Parsing uses
 * csv-parse; every problem names the file, the line and the column.
 */
import { parse } from "csv-parse/sync";
import type { Problem } from "../core/errors.js";
import type { InputFile } from "./files.js";

export interface CsvRow {
  line: number;
  cells: Map<string, string>;
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
}

export function readCsv(input: InputFile, shape: CsvShape, problems: Problem[]): CsvTable | null {
  const file = input.name;
  const lines = input.text.split(/\r?\n/);
  const comments: string[] = [];
  let skip = 0;
  while (skip < lines.length && (lines[skip]!.trim().startsWith("#") || (lines[skip]!.trim() === "" && skip < lines.length - 1))) {
    const t = lines[skip]!.trim();
    if (t.startsWith("#")) comments.push(t.replace(/^#\s?/, ""));
    skip++;
  }
  const body = lines.slice(skip).join("\n");
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parse(body, { info: true, skip_empty_lines: true, trim: true, relax_column_count: true }) as unknown as typeof records;
  } catch (e) {
    const err = e as { lines?: number; message?: string };
    problems.push({ file, ...(err.lines !== undefined ? { line: err.lines + skip } : {}), message: `not valid CSV: ${String(err.message ?? e).replace(/^Invalid Record Length: /, "")}` });
    return null;
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
  for (let r = 1; r < records.length; r++) {
    const rec = records[r]!;
    const line = rec.info.lines + skip;
    if (rec.record.length !== header.length) {
      problems.push({ file, line, message: `expected ${header.length} cells (${header.join(",")}), got ${rec.record.length}` });
      continue;
    }
    const cells = new Map<string, string>();
    header.forEach((h, i) => cells.set(h, rec.record[i]!));
    rows.push({ line, cells });
  }
  if (rows.length === 0 && records.length === 1) problems.push({ file, line: headerLine, message: "expected data rows after the header; found none" });
  return { file, comments, header, rows };
}

function describeShape(shape: CsvShape): string {
  const req = shape.required.map((s) => s.join(",")).join(" or ");
  return shape.optional.length ? `columns ${req} (optional: ${shape.optional.join(", ")})` : `columns ${req}`;
}

const NUMBER_RE = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/** A numeric cell: returns its exact text and value, or records a problem. */
export function numberCell(t: CsvTable, row: CsvRow, col: string, problems: Problem[], opts: { integer?: boolean; min?: number } = {}): { text: string; value: number } | null {
  const text = row.cells.get(col);
  if (text === undefined) return null;
  const expected = opts.integer ? "a whole number" : "a number";
  if (!NUMBER_RE.test(text)) {
    problems.push({ file: t.file, line: row.line, column: col, message: `expected ${expected}${opts.min !== undefined ? ` ≥ ${opts.min}` : ""}, got "${text}"` });
    return null;
  }
  const value = Number(text);
  if (!Number.isFinite(value) || (opts.integer && !Number.isInteger(value)) || (opts.min !== undefined && value < opts.min)) {
    problems.push({ file: t.file, line: row.line, column: col, message: `expected ${expected}${opts.min !== undefined ? ` ≥ ${opts.min}` : ""}, got "${text}"` });
    return null;
  }
  return { text, value };
}
