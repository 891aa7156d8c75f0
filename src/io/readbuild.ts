/**
 * Reading a build folder back: manifest, words from each table format, codes.csv.
 * Used by diff and verify. Every decoder is independent of the writers' code paths
 * except for the word layout itself.
 */
import { createRequire } from "node:module";
import { closeSync, constants, fstatSync, lstatSync, openSync, readSync, statSync } from "node:fs";
import { join } from "node:path";
import { constants as bufferConstants } from "node:buffer";
import { InputError, type Problem } from "../core/errors.js";
import { INPUT_COPY, makeManifest, SCENARIO_COPY, type Manifest } from "./build.js";
import { firstDifference, pointerPart } from "./json-diff.js";
import { D } from "../core/exact.js";
import { makeQuantizer, prepareFrequency } from "../core/quantize/index.js";
import { allocBeamCodes } from "../core/quantize/contract.js";
import { MAX_MANIFEST_BYTES } from "./files.js";
import { loadScenario, MAX_BEAMS, MAX_TABLE_BYTES, type InputRole, type LoadedScenario } from "./scenario.js";
import { wordBytes } from "../core/words.js";
import { DEVICE_FORMATS } from "../core/devices.js";
import { DEVICE_MAP_FILE } from "../formats/device-images.js";

/**
 * Reading a file a build folder names, safely: a crafted folder must not lead us out
 * of it (`../../proc/self/environ`, `/dev/zero`, a link to /usr). Every name is a
 * relative path of plain components; every folder on the way and the file itself are
 * checked with lstat (symbolic links are refused, not followed); the file must be a
 * regular file and is opened with O_NOFOLLOW and checked again on its descriptor.
 */
export { MAX_MANIFEST_BYTES };
/** Largest file a build folder may hold (table.bin is at most 4 GiB; its text forms are larger). */
export const MAX_FOLDER_FILE_BYTES = 64 * 2 ** 30;

export type FolderEntry = { kind: "file"; path: string; size: number } | { kind: "missing"; path: string };

function checkName(rel: string): string | null {
  if (typeof rel !== "string" || rel === "") return "expected a file name";
  if (rel.includes("\\") || rel.includes("\0")) return `expected a plain relative file name, got ${JSON.stringify(rel)}`;
  if (rel.startsWith("/")) return `expected a name inside the folder, got the absolute path ${JSON.stringify(rel)}`;
  for (const c of rel.split("/")) if (c === "" || c === "." || c === "..") return `expected a name inside the folder, got ${JSON.stringify(rel)}`;
  return null;
}

/** Where `rel` is inside `dir`, after checking every step (throws InputError for anything but a regular file or a missing one). */
export function folderEntry(dir: string, rel: string, what = rel): FolderEntry {
  const bad = checkName(rel);
  if (bad) throw new InputError({ file: join(dir, "manifest.json"), message: `${what}: ${bad}` });
  const parts = rel.split("/");
  let p = dir;
  for (let i = 0; i < parts.length; i++) {
    p = join(p, parts[i]!);
    let st;
    try {
      st = lstatSync(p);
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (code === "ENOENT" || code === "ENOTDIR") return { kind: "missing", path: p };
      throw new InputError({ file: p, message: `cannot read (${code ?? String(e)})` });
    }
    const last = i === parts.length - 1;
    if (st.isSymbolicLink()) throw new InputError({ file: p, message: "is a symbolic link; a build folder holds regular files only (links are not followed)" });
    if (!last && !st.isDirectory()) return { kind: "missing", path: join(dir, rel) };
    if (last && !st.isFile()) throw new InputError({ file: p, message: st.isDirectory() ? "is a folder; expected a regular file" : "is not a regular file (a device, FIFO or socket); a build folder holds regular files only" });
    if (last && st.size > MAX_FOLDER_FILE_BYTES) throw new InputError({ file: p, message: `is ${st.size} bytes; expected at most ${MAX_FOLDER_FILE_BYTES}` });
    if (last) return { kind: "file", path: p, size: st.size };
  }
  return { kind: "missing", path: p };
}

/** Open a checked folder file for reading (O_NOFOLLOW; the descriptor is checked to be a regular file). */
export function openFolderFile(path: string): number {
  let fd: number;
  try {
    fd = openSync(path, constants.O_RDONLY | (constants.O_NOFOLLOW ?? 0));
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError({ file: path, message: code === "ELOOP" ? "is a symbolic link; a build folder holds regular files only" : `cannot open (${code ?? String(e)})` });
  }
  if (!fstatSync(fd).isFile()) {
    closeSync(fd);
    throw new InputError({ file: path, message: "is not a regular file; a build folder holds regular files only" });
  }
  return fd;
}

/** A whole folder file, at most `max` bytes (the size is checked before reading and again while reading). */
export function readFolderFile(dir: string, rel: string, max: number, why = ""): Buffer | null {
  const e = folderEntry(dir, rel);
  if (e.kind === "missing") return null;
  if (e.size > max) throw new InputError({ file: e.path, message: `is ${e.size} bytes; expected at most ${max}${why}` });
  const fd = openFolderFile(e.path);
  try {
    const buf = Buffer.allocUnsafe(Math.min(max, e.size) + 1);
    let n = 0;
    for (;;) {
      const r = readSync(fd, buf, n, buf.length - n, null);
      if (r === 0) break;
      n += r;
      if (n === buf.length) throw new InputError({ file: e.path, message: `grew while being read (past ${n - 1} bytes)` });
    }
    return buf.subarray(0, n);
  } finally {
    closeSync(fd);
  }
}

/** The folder itself: it must exist and be a folder (a link to one is fine; a link loop is reported). */
export function checkFolder(dir: string): void {
  try {
    if (!statSync(dir).isDirectory()) throw new InputError({ file: dir, message: "is not a folder; expected a steercode build folder" });
  } catch (e) {
    if (e instanceof InputError) throw e;
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError({ file: dir, message: code === "ENOENT" ? "folder not found" : code === "ELOOP" ? "is a symbolic link loop; expected a steercode build folder" : `cannot read (${code ?? String(e)})` });
  }
}

const ROLES = Object.keys(INPUT_COPY) as InputRole[];

/**
 * manifest.json, parsed and checked for the shape every reader relies on. Anything
 * malformed is bad input (exit 2) located by JSON pointer; whether its values are
 * right is verify's job (each is compared with the value recomputed from the inputs).
 */
export function readManifest(dir: string): Manifest {
  checkFolder(dir);
  const p = join(dir, "manifest.json");
  const bytes = readFolderFile(dir, "manifest.json", MAX_MANIFEST_BYTES);
  if (!bytes) throw new InputError({ file: p, message: "not found: expected a steercode build folder (with manifest.json)" });
  let m: Manifest;
  try {
    m = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes)) as Manifest;
  } catch (e) {
    throw new InputError({ file: p, message: `not valid JSON (${(e as Error).message})` });
  }
  if (typeof m !== "object" || m === null || Array.isArray(m)) throw new InputError({ file: p, pointer: "", message: "expected a JSON object (a steercode-manifest/1 document)" });
  if (m.format !== "steercode-manifest/1") throw new InputError({ file: p, pointer: "/format", message: `expected "steercode-manifest/1", got ${JSON.stringify(m.format)}` });
  const problems: Problem[] = [];
  const at = (pointer: string, message: string) => problems.push({ file: p, pointer, message });
  const isObj = (x: unknown) => typeof x === "object" && x !== null && !Array.isArray(x);
  const isCount = (x: unknown) => Number.isSafeInteger(x) && (x as number) >= 0;
  if (!isObj(m.tool) || typeof m.tool.version !== "string") at("/tool/version", "expected the version string of the steercode that wrote the folder");
  if (!isObj(m.scenario) || typeof m.scenario.source !== "string") at("/scenario/source", "expected the scenario's file name (a string)");
  if (typeof m.analysis !== "boolean") at("/analysis", "expected true or false");
  if (!Array.isArray(m.inputs)) at("/inputs", "expected a list of the copied input files");
  else
    m.inputs.forEach((i, k) => {
      if (!isObj(i) || !ROLES.includes(i.role)) at(`/inputs/${k}/role`, `expected one of ${ROLES.join(", ")}`);
      else if (i.copy !== INPUT_COPY[i.role]) at(`/inputs/${k}/copy`, `expected ${JSON.stringify(INPUT_COPY[i.role])} (the copy of a ${i.role} input), got ${JSON.stringify(i.copy)}`);
      if (!isObj(i) || typeof i.ref !== "string") at(`/inputs/${k}/ref`, "expected the file name the scenario uses (a string)");
    });
  if (!isObj(m.files)) at("/files", "expected an object: file name → size and SHA-256");
  else
    for (const [name, f] of Object.entries(m.files)) {
      const bad = checkName(name);
      const ptr = `/files/${pointerPart(name)}`;
      if (bad) at(ptr, bad);
      else if (!isObj(f) || !isCount(f.bytes) || typeof f.sha256 !== "string" || !/^[0-9a-f]{64}$/.test(f.sha256)) at(ptr, "expected { bytes: a whole number, sha256: 64 hex digits }");
    }
  // the fields diff and report read
  if (!isObj(m.counts) || !["frequencies", "beams", "elements", "enabledElements", "words"].every((k) => isCount((m.counts as unknown as Record<string, unknown>)[k]))) at("/counts", "expected whole-number counts (frequencies, beams, elements, enabledElements, words)");
  if (!Array.isArray(m.elementIds) || !m.elementIds.every(isCount)) at("/elementIds", "expected a list of element ids (whole numbers)");
  if (!Array.isArray(m.disabledIds) || !m.disabledIds.every(isCount)) at("/disabledIds", "expected a list of element ids (whole numbers)");
  if (!Array.isArray(m.frequenciesHz) || !m.frequenciesHz.every((f) => typeof f === "string")) at("/frequenciesHz", "expected a list of frequencies (decimal strings)");
  if (!isObj(m.layout) || !isCount(m.layout.bits) || m.layout.bits < 1 || m.layout.bits > 32 || !isCount(m.layout.bytes) || !isCount(m.layout.off) || !Array.isArray(m.layout.fields) || !m.layout.fields.every((f) => isObj(f) && typeof f.name === "string" && isCount(f.shift) && isCount(f.width) && f.shift + f.width <= 32))
    at("/layout", "expected the word layout (bits 1–32, bytes, off, fields with name, shift and width)");
  if (!isObj(m.phaseShifter) || !isCount(m.phaseShifter.bits) || m.phaseShifter.bits > 12) at("/phaseShifter/bits", "expected the phase shifter's bits (1–12)");
  if (!Array.isArray(m.perFrequency)) at("/perFrequency", "expected a list, one entry per frequency");
  else {
    // diff writes each G_ref change to diff.json: a NaN there was an internal error
    const k = m.perFrequency.findIndex((p) => !isObj(p) || typeof p.frequencyHz !== "string" || typeof p.gRefDb !== "number" || !Number.isFinite(p.gRefDb));
    if (k >= 0) at(`/perFrequency/${k}`, "expected { frequencyHz: a decimal string, gRefDb: a number, gRefElement, clipped }");
    else if (Array.isArray(m.frequenciesHz) && m.perFrequency.length !== m.frequenciesHz.length) at("/perFrequency", `expected one entry per frequency (${m.frequenciesHz.length}), found ${m.perFrequency.length}`);
  }
  // diff and build --compare print the calibration record (a number or comments that were not a list: an internal error)
  const cal = m.calibration as unknown as Record<string, unknown> | null | undefined;
  if (cal != null && (!isObj(cal) || typeof cal.ref !== "string" || typeof cal.sha256 !== "string" || !Array.isArray(cal.comments) || !cal.comments.every((c: unknown) => typeof c === "string")))
    at("/calibration", "expected null or the calibration record (ref, sha256, comments: a list of strings)");
  // the band analysis the report prints (a malformed one was an internal error there)
  const ext = m.extra as unknown;
  if (ext !== undefined && !isObj(ext)) at("/extra", "expected an object (the analysis summary)");
  else if (ext !== undefined && (ext as Record<string, unknown>).band !== undefined) {
    const b = (ext as Record<string, unknown>).band as Record<string, unknown>;
    const num = (x: unknown) => x === null || (typeof x === "number" && Number.isFinite(x));
    const hz = (x: unknown) => x === null || typeof x === "string" || (typeof x === "number" && Number.isFinite(x));
    const dist = (d: unknown) => isObj(d) && ["median", "p95", "max"].every((k) => num((d as Record<string, unknown>)[k]));
    if (!isObj(b) || !Array.isArray(b.frequenciesHz) || b.frequenciesHz.length === 0 || !b.frequenciesHz.every((f) => typeof f === "string") || !dist(b.worstPointingDeg) || !dist(b.worstGainLossDb) || !Array.isArray(b.perBeam) || !b.perBeam.every((r) => isObj(r) && isCount(r.beam) && num(r.worstPointingDeg) && num(r.worstGainLossDb) && hz(r.worstPointingAtHz) && hz(r.worstGainLossAtHz)))
      at("/extra/band", "expected the band analysis (frequenciesHz, worstPointingDeg, worstGainLossDb, perBeam: one entry per table frequency and beam)");
  }
  // the device section diff reads (map.csv's fixed name, the address layout): a manifest naming
  // "../../../dev/zero" as the map was read, and diff grew without bound, deaf to SIGTERM
  const dev = m.devices as unknown;
  if (dev !== undefined) {
    const d = dev as Record<string, unknown>;
    const a = d.address as Record<string, unknown> | undefined;
    if (!isObj(dev)) at("/devices", "expected an object (the device images' layout)");
    else {
      if (d.map !== DEVICE_MAP_FILE) at("/devices/map", `expected ${JSON.stringify(DEVICE_MAP_FILE)}, got ${JSON.stringify(d.map)}`);
      if (!isCount(d.channels) || (d.channels as number) < 1) at("/devices/channels", "expected the channels of a device (a whole number ≥ 1)");
      if (!isObj(a) || !["base", "beamStride", "channelStride"].every((k) => isCount(a![k]))) at("/devices/address", "expected { base, beamStride, channelStride }: whole numbers");
      if (!isCount(d.fill)) at("/devices/fill", "expected the fill word (a whole number)");
      if (!Array.isArray(d.formats) || !d.formats.every((f) => (DEVICE_FORMATS as readonly unknown[]).includes(f))) at("/devices/formats", `expected a list of image formats (${DEVICE_FORMATS.join(", ")})`);
      if (!Array.isArray(d.list) || !d.list.every((x) => isObj(x) && isCount((x as Record<string, unknown>).id))) at("/devices/list", "expected a list of devices ({ id, channelsUsed, words, bytes })");
    }
  }
  if (problems.length) throw new InputError(problems);
  return m;
}

/**
 * What diff relies on beyond readManifest's shape: the counts agree with the lists and
 * give the table's word count, and the word size follows from the layout's bits. verify
 * finds such a manifest wrong (exit 1, at the pointer) by regenerating it; diff reads the
 * table by these numbers, and a layout of 0 or 7 bytes a word, or 2^40 elements, was an
 * internal error (exit 3), a table.bin with a byte appended compared as if whole (exit 0).
 */
export function tableShapeProblems(dir: string, m: Manifest): Problem[] {
  const file = join(dir, "manifest.json");
  const problems: Problem[] = [];
  const at = (pointer: string, message: string) => problems.push({ file, pointer, message });
  const c = m.counts;
  if (m.layout.bytes !== wordBytes(m.layout.bits)) at("/layout/bytes", `expected ${wordBytes(m.layout.bits)} (a ${m.layout.bits}-bit word), got ${m.layout.bytes}`);
  if (m.phaseShifter.bits < 1) at("/phaseShifter/bits", `expected the phase shifter's bits (1–12), got ${m.phaseShifter.bits}`);
  if (c.frequencies < 1 || c.frequencies !== m.frequenciesHz.length) at("/counts/frequencies", `expected the number of frequencies listed in /frequenciesHz (${m.frequenciesHz.length}, at least 1), got ${c.frequencies}`);
  if (c.elements < 1 || c.elements !== m.elementIds.length) at("/counts/elements", `expected the number of ids listed in /elementIds (${m.elementIds.length}, at least 1), got ${c.elements}`);
  if (c.beams < 1 || c.beams > MAX_BEAMS) at("/counts/beams", `expected 1 … ${MAX_BEAMS} beams, got ${c.beams}`);
  if (!problems.length && c.words !== c.frequencies * c.beams * c.elements) at("/counts/words", `expected frequencies × beams × elements = ${c.frequencies * c.beams * c.elements}, got ${c.words}`);
  else if (!problems.length && c.words * m.layout.bytes > MAX_TABLE_BYTES) at("/counts/words", `expected a table of at most ${MAX_TABLE_BYTES} bytes, got ${c.words} words of ${m.layout.bytes} bytes`);
  return problems;
}

/**
 * Whole-file reads of table files (diff): table.bin up to what one read and one buffer
 * take (2 GiB − 1), text tables up to the longest string V8 makes (2^29 − 24 characters).
 */
const MAX_WHOLE_READ = Math.min(MAX_FOLDER_FILE_BYTES, bufferConstants.MAX_LENGTH - 1, 2 ** 31 - 1);
const MAX_WHOLE_TEXT = Math.min(MAX_WHOLE_READ, 2 ** 29 - 24);
const tableFile = (dir: string, rel: string): Buffer | null =>
  rel === "table.bin"
    ? readFolderFile(dir, rel, MAX_WHOLE_READ, ": diff reads table.bin whole, up to 2 GiB")
    : readFolderFile(dir, rel, MAX_WHOLE_TEXT, ": diff reads a text table whole, up to 512 MiB; build with \"bin\" among the outputs to compare larger tables");

export interface Decoded {
  words: Uint32Array;
  file: string;
}

export function wordsFromBin(dir: string, m: Manifest): Decoded | null {
  const b = tableFile(dir, "table.bin");
  if (!b) return null;
  const bytes = m.layout.bytes;
  // a trailing part of a word was dropped without a word (diff compared the rest, exit 0)
  if (b.length % bytes !== 0) throw new InputError({ file: join(dir, "table.bin"), message: `holds ${b.length} bytes, not a whole number of ${bytes}-byte words; run steercode verify on this folder` });
  const n = b.length / bytes;
  const words = new Uint32Array(n);
  for (let i = 0; i < n; i++) words[i] = b.readUIntLE(i * bytes, bytes);
  return { words, file: "table.bin" };
}

export function wordsFromMem(dir: string): Decoded | null {
  const p = join(dir, "table.mem");
  const b = tableFile(dir, "table.mem");
  if (!b) return null;
  const out: number[] = [];
  const lines = b.toString("utf8").split("\n");
  for (let k = 0; k < lines.length; k++) {
    const t = lines[k]!.replace(/\/\/.*$/, "").trim();
    if (!t) continue;
    for (const tok of t.split(/\s+/)) {
      if (tok.startsWith("@")) throw new InputError({ file: p, line: k + 1, message: "address jumps (@addr) are not written by steercode; the file was edited" });
      // parseInt("zz", 16) is NaN, stored as word 0: diff said "identical" (exit 0)
      if (!/^[0-9A-Fa-f]{1,8}$/.test(tok)) throw new InputError({ file: p, line: k + 1, message: `expected a word in hex digits, got ${JSON.stringify(tok.length > 40 ? tok.slice(0, 40) + "…" : tok)}; run steercode verify on this folder` });
      out.push(parseInt(tok, 16));
    }
  }
  return { words: Uint32Array.from(out), file: "table.mem" };
}

export function wordsFromJson(dir: string): Decoded | null {
  const p = join(dir, "table.json");
  const b = tableFile(dir, "table.json");
  if (!b) return null;
  let doc: { words?: unknown };
  try {
    doc = JSON.parse(b.toString("utf8")) as { words?: unknown };
  } catch (e) {
    throw new InputError({ file: p, message: `not valid JSON (${(e as Error).message}); run steercode verify on this folder` });
  }
  const flat = Array.isArray(doc.words) ? (doc.words as unknown[]).flat(2) : null;
  if (!flat || !flat.every((w) => Number.isInteger(w) && (w as number) >= 0 && (w as number) <= 0xffffffff)) throw new InputError({ file: p, pointer: "/words", message: "expected [frequency][beam][element] arrays of words (whole numbers); run steercode verify on this folder" });
  return { words: Uint32Array.from(flat as number[]), file: "table.json" };
}

/** The array initialiser of table.h (between "= {" and the closing "};"), and its CRC define. */
export function wordsFromHeader(dir: string): (Decoded & { crc32: number | null }) | null {
  const b = tableFile(dir, "table.h");
  if (!b) return null;
  const text = b.toString("utf8");
  const start = text.indexOf("= {");
  const end = text.indexOf("};", start);
  const body = start >= 0 && end > start ? text.slice(start + 3, end).replace(/\/\*[\s\S]*?\*\//g, "") : "";
  const hex = body.match(/0x[0-9A-Fa-f]+/g) ?? [];
  const long = hex.find((h) => h.length > 10);
  // Uint32Array keeps the low 32 bits of a longer number: 0x1000000AB would compare as 0xAB
  if (long) throw new InputError({ file: join(dir, "table.h"), message: `expected 32-bit words in the table's initialiser, got ${long.length > 40 ? long.slice(0, 40) + "…" : long}; run steercode verify on this folder` });
  const words = Uint32Array.from(hex, (h) => parseInt(h, 16));
  const crc = /#define STEERCODE_TABLE_CRC32 0x([0-9A-Fa-f]{8})u/.exec(text);
  return { words, file: "table.h", crc32: crc ? parseInt(crc[1]!, 16) : null };
}

export interface CodesCsv {
  words: Uint32Array;
  phase: Int32Array;
  atten: Int32Array;
  element: Int32Array;
}

export function readCodesCsv(dir: string): CodesCsv | null {
  const b = tableFile(dir, "codes.csv");
  if (!b) return null;
  const { parse } = createRequire(import.meta.url)("csv-parse/sync") as typeof import("csv-parse/sync"); // loaded on first use
  const p = join(dir, "codes.csv");
  let rows: string[][];
  try {
    rows = parse(b, { from_line: 2 }) as string[][];
  } catch (e) {
    // a ragged or badly quoted row was an internal error (exit 3)
    const err = e as { lines?: number; message?: string };
    throw new InputError({ file: p, ...(err.lines !== undefined ? { line: err.lines } : {}), message: `not valid CSV (${String(err.message ?? e)}); run steercode verify on this folder` });
  }
  const n = rows.length;
  const c: CodesCsv = { words: new Uint32Array(n), phase: new Int32Array(n), atten: new Int32Array(n), element: new Int32Array(n) };
  const COLUMNS = ["element", "phase_code", "atten_code", "word"] as const;
  rows.forEach((r, i) => {
    // Number("x") is NaN, stored as 0: a garbled cell compared as word 0
    for (let k = 2; k <= 5; k++)
      if (!/^\d{1,10}$/.test(r[k] ?? "")) throw new InputError({ file: p, line: i + 2, column: COLUMNS[k - 2]!, message: `expected a whole number, got ${JSON.stringify(r[k] ?? "")}; run steercode verify on this folder` });
    c.element[i] = Number(r[2]);
    c.phase[i] = Number(r[3]);
    c.atten[i] = Number(r[4]);
    c.words[i] = Number(r[5]);
  });
  return c;
}

/** The words of a build from the first format present (table.bin, table.json, table.mem, table.h). */
export function buildWords(dir: string, m: Manifest): Decoded {
  // a table the manifest lists but the folder lacks: the folder is damaged (diff fell back to codes.csv and said "identical")
  for (const name of ["table.bin", "table.json", "table.mem", "table.h", "codes.csv"])
    if (m.files[name] && folderEntry(dir, name).kind === "missing") throw new InputError({ file: join(dir, name), message: "is listed in manifest.json but missing; run steercode verify on this folder" });
  const d = wordsFromBin(dir, m) ?? wordsFromJson(dir) ?? wordsFromMem(dir) ?? wordsFromHeader(dir) ?? ((c) => (c ? { words: c.words, file: "codes.csv" } : null))(readCodesCsv(dir));
  if (!d) throw new InputError({ file: dir, message: "holds no table (table.bin, table.json, table.mem, table.h or codes.csv)" });
  // every word fits the layout's bits (a 0x1FFFF in a 16-bit table was compared and printed as found)
  const max = m.layout.bits >= 32 ? 0xffffffff : 2 ** m.layout.bits - 1;
  const k = d.words.findIndex((w) => w > max);
  if (k >= 0) throw new InputError({ file: join(dir, d.file), message: `word ${k} (0-based) is 0x${d.words[k]!.toString(16).toUpperCase()}, wider than the manifest's ${m.layout.bits}-bit word; run steercode verify on this folder` });
  return d;
}

/**
 * The scenario recorded in a build folder, read from its `inputs/` copies (so it works on
 * a folder moved to another machine). Copies have fixed names (INPUT_COPY), checked
 * like every folder file; a reference the manifest does not map resolves to a path
 * inside `inputs/` that does not exist, and is reported as a missing file.
 */
export function loadBuildScenario(dir: string, m: Manifest): LoadedScenario {
  const copies = new Map<string, string>();
  for (const i of m.inputs) {
    const e = folderEntry(dir, INPUT_COPY[i.role]);
    copies.set(i.ref, e.path);
  }
  const sc = folderEntry(dir, SCENARIO_COPY);
  return loadScenario(sc.path, { resolveRef: (ref) => copies.get(ref) ?? join(dir, "inputs", "missing-" + ref.replace(/[\\/]/g, "_")), displayName: join(dir, SCENARIO_COPY) });
}

/**
 * Where manifest.json disagrees with what the recorded inputs say, or null: every field
 * that follows from `inputs/` alone (name, scenario and input hashes and sizes, counts,
 * element ids, frequencies, layout, parts, taper, quantizer, calibration, G_ref). `report`
 * draws its page from the recorded inputs and prints a few manifest values beside them; a
 * manifest edited after the build (7 beams where the inputs give 133, another layout, a
 * forged calibration hash) was reported as if it belonged there. Not checked here (verify's
 * job, which regenerates every file): everything about the output files.
 */
export function manifestInputsDisagreement(dir: string, m: Manifest, loaded: LoadedScenario): Problem | null {
  const plan = loaded.plan;
  // the clip count is the same for every beam of a frequency (the attenuation each element needs against the
  // attenuator's range; the optimized quantizer keeps the nearest codes' clips): one beam's nearest codes give it
  const nearest: typeof plan = { ...plan, quantizer: { ...plan.quantizer, method: "nearest" } };
  const codes = allocBeamCodes(plan.elements.count);
  const perFrequency = Array.from(plan.frequenciesHz, (_, fi) => {
    const p = prepareFrequency(plan, fi);
    makeQuantizer(nearest, fi, p).beam(0, codes);
    return { gRefDb: p.gRefDb, gRefElement: p.gRefElement, clipped: codes.clipped };
  });
  const copies: Manifest["files"] = {};
  for (const i of loaded.inputs) copies[INPUT_COPY[i.role]] = { bytes: i.file.bytes.length, sha256: i.file.sha256 };
  copies[SCENARIO_COPY] = { bytes: loaded.scenario.bytes.length, sha256: loaded.scenario.sha256 };
  const expected = makeManifest(loaded, m.scenario.source, perFrequency, copies, m.analysis) as unknown as Record<string, unknown>;
  const found = m as unknown as Record<string, unknown>;
  let d: ReturnType<typeof firstDifference> = null;
  for (const k of Object.keys(expected).sort()) {
    if (k === "tool" || k === "files") continue;
    d ??= firstDifference(expected[k], found[k], `/${pointerPart(k)}`);
  }
  for (const k of Object.keys(copies).sort()) d ??= firstDifference(copies[k], m.files[k], `/files/${pointerPart(k)}`);
  // a band section is the scenario's band, one entry per (table frequency, beam); the report printed one for a build without a band
  const band = (m.extra as { band?: { frequenciesHz: unknown[]; perBeam: { beam: number }[] } } | undefined)?.band;
  if (band !== undefined) {
    const expectedHz = m.analysis && plan.band ? plan.band.frequenciesExact.map((x) => new D(x).toFixed()) : undefined;
    d ??= firstDifference(expectedHz, band.frequenciesHz, "/extra/band/frequenciesHz");
    const B = plan.beams.count, n = plan.frequenciesHz.length * B;
    for (let k = 0; k < Math.max(n, band.perBeam.length) && !d; k++) d = firstDifference(k < n ? k % B : undefined, band.perBeam[k]?.beam, `/extra/band/perBeam/${k}/beam`);
  }
  if (!d) return null;
  return { file: join(dir, "manifest.json"), pointer: d.pointer, message: `says ${d.found}, the recorded inputs (${SCENARIO_COPY} and its input copies) give ${d.expected}: the folder was changed after the build; run steercode verify on it` };
}
