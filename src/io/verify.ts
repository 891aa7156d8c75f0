/**
 * `steercode verify DIR`: end-to-end check of a build before it is flashed.
 *
 * Nothing a file in the folder states is taken on trust. From the scenario and input
 * files copied into `inputs/`, verify regenerates every output through the same
 * engine and writers as `build`, streaming beam by beam, and compares the bytes with
 * the files in the folder as they are produced (memory stays flat in beams):
 *   - every table file (codes.csv, table.bin, table.h, table.mem, table.json), byte for
 *     byte and to its exact length: every column of codes.csv, every #define of table.h;
 *   - beams.csv (the analysis is rerun when the manifest says the build had one);
 *   - manifest.json itself: regenerated from the recomputed files and the recorded
 *     inputs (frequencies, element ids, counts, calibration comments, layout, G_ref,
 *     clip counts, the list of files, every size, SHA-256 and CRC-32), byte for byte.
 * The first difference is located by file, byte, line and, inside a table, by
 * (frequency, beam, element). A folder that is structurally unsafe (a link, a device,
 * a path out of the folder) or whose manifest is malformed is bad input (exit 2).
 *
 * Each output kind is one entry of OUTPUT_CHECKS (how to find the element a differing
 * byte belongs to); a new writer added to `makeWriters` is compared automatically.
 */
import { createHash, type Hash } from "node:crypto";
import { closeSync, lstatSync, readdirSync, readSync } from "node:fs";
import { join } from "node:path";
import { crc32 } from "node:zlib";
import { InputError } from "../core/errors.js";
import { frequencyText, hex32, INPUT_COPY, produceOutputs, SCENARIO_COPY, stableJson, type BeamCursor, type Manifest, type Produced } from "./build.js";
import type { FileDigest } from "./hashed.js";
import { firstDifference } from "./json-diff.js";
import { folderEntry, loadBuildScenario, openFolderFile, readFolderFile, readManifest, MAX_FOLDER_FILE_BYTES, MAX_MANIFEST_BYTES, type FolderEntry } from "./readbuild.js";
import type { LoadedScenario } from "./scenario.js";
import { TABLE_FILES, type ByteSink, type OpenSink } from "./tables.js";
import { toolVersion } from "./version.js";
import { runTables } from "../core/engine.js";
import { DEVICE_MAP_FILE, deviceFile } from "../formats/device-images.js";
import { verifyDevices } from "../workflows/devices.js";

export interface Check {
  check: string;
  ok: boolean;
  detail: string;
}

/** The first byte where a file differs from what the recorded inputs give. */
export interface Mismatch {
  file: string;
  /** offset of the first differing byte (0-based) */
  byte: number;
  /** 1-based line of that byte (text files) */
  line: number | null;
  /** JSON pointer of the first differing value (manifest.json) */
  pointer: string | null;
  frequency_hz: string | null;
  beam: number | null;
  /** element id */
  element: number | null;
  /** what the inputs give and what the file holds there: the line (text) or the word (table.bin) */
  expected: string;
  found: string;
  /** device images only: the device, the word address in its image, and the channel there (null: an address no channel uses) */
  device?: number;
  address?: number;
  channel?: number | null;
}

export interface VerifyResult {
  ok: boolean;
  checks: Check[];
  firstMismatch: Mismatch | null;
}

export interface VerifyOptions {
  /** threads for rerunning the analysis at most (default 1; how many run is measured, as in a build) */
  jobs?: number;
}

/** Files `build --compare` adds to a build: not derivable from the recorded inputs, so only their recorded size and SHA-256 are checked. */
export const COMPARE_FILES = ["changes.csv", "diff.json"];

// ---- locating a difference inside a file ------------------------------------------------


interface Where {
  fi: number;
  b: number;
  /** index in table order, or null (a beam's header) */
  e: number | null;
}

interface LocateArgs {
  byte: number;
  line: number | null;
  /** the beam being written when the difference was found, with its bytes and the offset in them */
  beam: { fi: number; b: number; chunk: Buffer; k: number } | null;
}

/**
 * How to find the (frequency, beam, element) of a differing byte in one output kind.
 * `binary`: word-sized records (found/expected shown as words); otherwise lines.
 */
export interface OutputCheck {
  binary?: boolean;
  locate(a: LocateArgs, shape: Shape): Where | null;
}

interface Shape {
  frequencies: number;
  beams: number;
  elements: number;
  wordBytes: number;
}

/** Row r (0-based, after `header` lines) of a file with one line per (frequency, beam, element). */
function rowWhere(line: number | null, header: number, s: Shape, perBeam: boolean): Where | null {
  if (line === null || line <= header) return null;
  const r = line - header - 1;
  if (perBeam) return r < s.frequencies * s.beams ? { fi: Math.floor(r / s.beams), b: r % s.beams, e: null } : null;
  if (r >= s.frequencies * s.beams * s.elements) return null;
  return { fi: Math.floor(r / (s.beams * s.elements)), b: Math.floor(r / s.elements) % s.beams, e: r % s.elements };
}

function countByte(buf: Buffer, c: number, from: number, to: number): number {
  let n = 0;
  for (let i = buf.indexOf(c, from); i !== -1 && i < to; i = buf.indexOf(c, i + 1)) n++;
  return n;
}

export const OUTPUT_CHECKS: Record<string, OutputCheck> = {
  [TABLE_FILES.csv]: { locate: (a, s) => rowWhere(a.line, 1, s, false) },
  [TABLE_FILES.mem]: { locate: (a, s) => rowWhere(a.line, 2, s, false) },
  [TABLE_FILES.bin]: {
    binary: true,
    locate: (a, s) => {
      const w = Math.floor(a.byte / s.wordBytes);
      if (w >= s.frequencies * s.beams * s.elements) return null;
      return { fi: Math.floor(w / (s.beams * s.elements)), b: Math.floor(w / s.elements) % s.beams, e: w % s.elements };
    },
  },
  // "0x…" tokens of the beam: the element is the number of tokens begun before the byte
  [TABLE_FILES.c]: {
    locate: (a, s) => {
      if (!a.beam) return null;
      let n = 0;
      for (let i = a.beam.chunk.indexOf("0x"); i !== -1 && i <= a.beam.k; i = a.beam.chunk.indexOf("0x", i + 2)) n++;
      return { fi: a.beam.fi, b: a.beam.b, e: n === 0 ? null : Math.min(n - 1, s.elements - 1) };
    },
  },
  // "…[w,w,w": the element is the number of commas after the beam's "[" and before the byte
  [TABLE_FILES.json]: {
    locate: (a, s) => {
      if (!a.beam) return null;
      const w0 = a.beam.chunk.lastIndexOf(0x5b) + 1;
      if (a.beam.k < w0) return { fi: a.beam.fi, b: a.beam.b, e: null };
      return { fi: a.beam.fi, b: a.beam.b, e: Math.min(countByte(a.beam.chunk, 0x2c, w0, a.beam.k), s.elements - 1) };
    },
  },
  "beams.csv": { locate: (a, s) => rowWhere(a.line, 1, s, true) },
};

// ---- reading what is there ---------------------------------------------------------------

const READ_CHUNK = 1 << 20;

/** The line of the file around `offset` (at most ~160 characters), read from the file itself. */
function lineAround(fd: number, offset: number, size: number): { start: number; text: string } {
  const from = Math.max(0, offset - 200);
  const buf = Buffer.alloc(Math.min(400, Math.max(0, size - from)));
  const n = buf.length ? readSync(fd, buf, 0, buf.length, from) : 0;
  const b = buf.subarray(0, n);
  const rel = offset - from;
  const s = b.lastIndexOf(10, rel - 1) + 1;
  let e = b.indexOf(10, rel);
  if (e === -1) e = b.length;
  return { start: from + s, text: clip(b.subarray(s, e).toString("utf8")) };
}

function clip(s: string): string {
  return s.length > 160 ? s.slice(0, 157) + "…" : s;
}

function lineNumber(fd: number, offset: number): number {
  const buf = Buffer.allocUnsafe(READ_CHUNK);
  let line = 1;
  for (let pos = 0; pos < offset; ) {
    const n = readSync(fd, buf, 0, Math.min(buf.length, offset - pos), pos);
    if (n <= 0) break;
    line += countByte(buf, 10, 0, n);
    pos += n;
  }
  return line;
}

/**
 * A ByteSink for `makeWriters`: the bytes the writers produce are hashed (for the
 * regenerated manifest) and compared, as they come, with the file in the folder, which
 * is read at most one byte past the expected length. Nothing is kept but a 1 MiB buffer.
 */
class ComparingSink implements ByteSink {
  private fd: number | null = null;
  private readonly hash: Hash = createHash("sha256");
  private crc = 0;
  private size = 0;
  private readonly rbuf = Buffer.allocUnsafe(READ_CHUNK);
  private rpos = 0;
  private rlen = 0;
  private filePos = 0;
  private fileSize = 0;
  mismatch: Mismatch | null = null;
  missing = false;
  constructor(
    readonly file: string,
    entry: FolderEntry,
    private readonly cursor: BeamCursor,
    private readonly ctx: { shape: Shape; ft: string[]; ids: Int32Array | Uint32Array | number[]; digits: number },
    private readonly withCrc = false,
  ) {
    if (entry.kind === "missing") this.missing = true;
    else {
      this.fd = openFolderFile(entry.path);
      this.fileSize = entry.size;
    }
  }
  write(data: Buffer | Uint8Array | string): void {
    this.consume(typeof data === "string" ? Buffer.from(data, "utf8") : Buffer.isBuffer(data) ? data : Buffer.from(data.buffer, data.byteOffset, data.byteLength));
  }
  writeTransient(buf: Buffer): void {
    this.consume(buf);
  }
  private consume(buf: Buffer): void {
    this.hash.update(buf);
    if (this.withCrc) this.crc = crc32(buf, this.crc);
    if (this.fd !== null && !this.mismatch) this.compare(buf);
    this.size += buf.length;
  }
  private refill(): number {
    const n = readSync(this.fd!, this.rbuf, 0, this.rbuf.length, this.filePos);
    this.filePos += n;
    this.rpos = 0;
    this.rlen = n;
    return n;
  }
  private compare(buf: Buffer): void {
    let off = 0;
    while (off < buf.length) {
      if (this.rpos === this.rlen && this.refill() === 0) {
        this.fail(buf, off, true);
        return;
      }
      const n = Math.min(buf.length - off, this.rlen - this.rpos);
      if (buf.compare(this.rbuf, this.rpos, this.rpos + n, off, off + n) !== 0) {
        let j = 0;
        while (buf[off + j] === this.rbuf[this.rpos + j]) j++;
        this.fail(buf, off + j, false);
        return;
      }
      off += n;
      this.rpos += n;
    }
  }
  /** the first difference: byte `k` of the chunk being written (or the file ends there) */
  private fail(chunk: Buffer, k: number, ended: boolean): void {
    const fd = this.fd!;
    const byte = this.size + k;
    const check = OUTPUT_CHECKS[this.file];
    const { shape, digits } = this.ctx;
    const binary = !!check?.binary;
    const line = binary ? null : lineNumber(fd, byte);
    const where = check?.locate({ byte, line, beam: this.cursor.inBeam ? { fi: this.cursor.fi, b: this.cursor.b, chunk, k } : null }, shape) ?? null;
    let expected: string, found: string;
    if (binary) {
      const r = byte % shape.wordBytes;
      const word = (b: Buffer) => (b.length === shape.wordBytes ? "0x" + b.readUIntLE(0, b.length).toString(16).toUpperCase().padStart(digits, "0") : `${b.length} byte(s)`);
      expected = word(chunk.subarray(Math.max(0, k - r), k - r + shape.wordBytes));
      const got = Buffer.alloc(shape.wordBytes);
      const n = ended ? 0 : readSync(fd, got, 0, got.length, byte - r);
      found = ended ? "(end of file)" : word(got.subarray(0, n));
    } else {
      // the bytes before `byte` are the same in both: the expected line is the file's line start + our bytes to the end of the line
      const at = lineAround(fd, byte, this.fileSize);
      const head = ended ? "" : at.text;
      let e = chunk.indexOf(10, k);
      if (e === -1) e = chunk.length;
      const start = ended ? byte : at.start;
      const prefix = Buffer.alloc(Math.max(0, Math.min(byte - start, 200)));
      if (prefix.length) readSync(fd, prefix, 0, prefix.length, byte - prefix.length);
      expected = clip(prefix.toString("utf8") + chunk.subarray(k, e).toString("utf8"));
      found = ended ? "(end of file)" : head;
    }
    this.mismatch = {
      file: this.file,
      byte,
      line,
      pointer: null,
      frequency_hz: where ? (this.ctx.ft[where.fi] ?? null) : null,
      beam: where ? where.b : null,
      element: where && where.e !== null ? Number(this.ctx.ids[where.e]) : null,
      expected,
      found,
    };
  }
  close(): FileDigest {
    if (this.fd !== null) {
      if (!this.mismatch && (this.rpos < this.rlen || this.refill() > 0)) {
        this.mismatch = { file: this.file, byte: this.size, line: null, pointer: null, frequency_hz: null, beam: null, element: null, expected: `(end of file after ${this.size} bytes)`, found: `more bytes: the file is ${this.fileSize} bytes` };
      }
      closeSync(this.fd);
      this.fd = null;
    }
    return { bytes: this.size, sha256: this.hash.digest("hex"), crc32: this.crc >>> 0 };
  }
  /** release the file after an error elsewhere */
  abandon(): void {
    if (this.fd !== null) closeSync(this.fd);
    this.fd = null;
  }
}

/** SHA-256, CRC-32 and size of a folder file, streamed, reading at most `limit` + 1 bytes. */
function hashFolderFile(entry: FolderEntry, limit: number): { bytes: number; sha256: string; crc32: number; longer: boolean } | null {
  if (entry.kind === "missing") return null;
  const fd = openFolderFile(entry.path);
  try {
    const h = createHash("sha256");
    let crc = 0;
    const buf = Buffer.allocUnsafe(READ_CHUNK);
    let pos = 0;
    for (;;) {
      const n = readSync(fd, buf, 0, Math.min(buf.length, limit + 1 - pos), pos);
      if (n <= 0) break;
      const part = buf.subarray(0, Math.min(n, limit - pos));
      h.update(part);
      crc = crc32(part, crc);
      pos += n;
      if (pos > limit) return { bytes: pos, sha256: h.digest("hex"), crc32: crc >>> 0, longer: true };
    }
    return { bytes: pos, sha256: h.digest("hex"), crc32: crc >>> 0, longer: false };
  } finally {
    closeSync(fd);
  }
}

// ---- the manifest -----------------------------------------------------------------------

export { firstDifference };

function compareManifest(dir: string, expectedText: string): Mismatch | null {
  const actual = readFolderFile(dir, "manifest.json", MAX_MANIFEST_BYTES)!;
  const exp = Buffer.from(expectedText, "utf8");
  if (actual.equals(exp)) return null;
  let i = 0;
  while (i < exp.length && i < actual.length && exp[i] === actual[i]) i++;
  const line = countByte(actual, 10, 0, i) + 1;
  const lineOf = (b: Buffer) => {
    const s = b.lastIndexOf(10, i - 1) + 1;
    let e = b.indexOf(10, i);
    if (e === -1) e = b.length;
    return clip(b.subarray(s, e).toString("utf8").trim());
  };
  let d: ReturnType<typeof firstDifference> = null;
  try {
    d = firstDifference(JSON.parse(expectedText), JSON.parse(actual.toString("utf8")));
  } catch {
    /* already parsed once by readManifest; a difference in layout only has no pointer */
  }
  return { file: "manifest.json", byte: i, line, pointer: d?.pointer ?? null, frequency_hz: null, beam: null, element: null, expected: d ? d.expected : lineOf(exp), found: d ? d.found : lineOf(actual) };
}

// ---- the whole check --------------------------------------------------------------------

function describe(m: Mismatch): string {
  const at: string[] = [];
  if (m.line !== null) at.push(`line ${m.line}`);
  else at.push(`byte ${m.byte}`);
  if (m.pointer) at.push(m.pointer);
  if (m.frequency_hz !== null) at.push(`frequency ${m.frequency_hz} Hz`);
  if (m.beam !== null) at.push(`beam ${m.beam}`);
  if (m.element !== null) at.push(`element ${m.element}`);
  return `${at.join(", ")}: the recorded inputs give ${m.expected}, the file holds ${m.found}`;
}

export async function verifyBuild(dir: string, opts: VerifyOptions = {}): Promise<VerifyResult> {
  const m = readManifest(dir);
  const checks: Check[] = [];
  const mismatches: Mismatch[] = [];
  const done = (first: Mismatch | null = mismatches[0] ?? null): VerifyResult => {
    return { ok: checks.every((c) => c.ok), checks, firstMismatch: first };
  };
  const ver = m.tool.version === toolVersion() ? "" : ` (built by steercode ${m.tool.version}, checked with ${toolVersion()}: a difference may come from the version)`;

  // 1. the recorded scenario and inputs (fixed names inside the folder; links refused: exit 2)
  folderEntry(dir, SCENARIO_COPY);
  for (const i of m.inputs) folderEntry(dir, INPUT_COPY[i.role]);
  let loaded: LoadedScenario;
  try {
    loaded = loadBuildScenario(dir, m);
  } catch (e) {
    if (!(e instanceof InputError)) throw e;
    checks.push({ check: `recorded scenario ${SCENARIO_COPY}`, ok: false, detail: `cannot be loaded, so nothing can be recomputed: ${e.message.split("\n").slice(0, 10).join("; ")}` });
    return done();
  }
  const plan = loaded.plan;
  checks.push({ check: `recorded scenario ${SCENARIO_COPY}`, ok: true, detail: `loaded with ${loaded.inputs.length} input file(s): ${[SCENARIO_COPY, ...loaded.inputs.map((i) => INPUT_COPY[i.role])].join(", ")}${ver}` });

  // 2. which files the recorded scenario implies; each must be a regular file in the folder (exit 2 otherwise)
  const outputFiles = plan.outputs.map((k) => TABLE_FILES[k]);
  if (m.analysis) outputFiles.push("beams.csv");
  const entries = new Map(outputFiles.map((f) => [f, folderEntry(dir, f)]));
  if (!plan.outputs.length) checks.push({ check: "tables", ok: true, detail: 'the scenario lists no outputs ("outputs": []): the folder holds no table; its manifest, inputs and analysis are checked' });

  // 3. regenerate every output, beam by beam, through build's own producer, comparing as we go
  const ft = frequencyText(plan);
  const cursor: BeamCursor = { fi: 0, b: 0, inBeam: false };
  const ctx = {
    shape: { frequencies: plan.frequenciesHz.length, beams: plan.beams.count, elements: plan.elements.count, wordBytes: plan.word.bytes },
    ft,
    ids: plan.elements.ids,
    digits: Math.ceil(plan.word.bits / 4),
  };
  const sinks = new Map<string, ComparingSink>();
  const open: OpenSink = (_path, file, o) => {
    const s = new ComparingSink(file, entries.get(file) ?? folderEntry(dir, file), cursor, ctx, !!o?.crc32);
    sinks.set(file, s);
    return s;
  };
  const source = m.scenario.source.split(/[\\/]/).pop() ?? "";
  let produced: Produced;
  try {
    produced = await produceOutputs(loaded, dir, source, { analysis: m.analysis, jobs: opts.jobs ?? 1, open, cursor });
  } catch (e) {
    for (const s of sinks.values()) s.abandon();
    throw e;
  }
  const files = produced.files;
  for (const f of sinks.keys()) if (!outputFiles.includes(f)) outputFiles.push(f);
  for (const f of outputFiles) {
    const s = sinks.get(f);
    if (!s) continue;
    const what = f === "beams.csv" ? "analysis rerun from the recorded inputs" : "bytes recomputed from the recorded inputs";
    if (s.missing) checks.push({ check: f, ok: false, detail: `missing: the recorded scenario produces it (${files[f]!.bytes} bytes)` });
    else if (s.mismatch) {
      mismatches.push(s.mismatch);
      checks.push({ check: f, ok: false, detail: `differs from the ${what} at ${describe(s.mismatch)}` });
    } else checks.push({ check: f, ok: true, detail: `identical to the ${what} (${files[f]!.bytes} bytes${files[f]!.crc32 ? `, CRC-32 ${files[f]!.crc32}` : ""})` });
  }

  // 3b. device images: written by build with positional writes, so not regenerated through
  // sinks; each image is decoded (bin, mem, hex by the formats' own rules) and compared
  // word by word with the table recomputed from the recorded inputs, and each file's size,
  // SHA-256 (and CRC-32 of .bin) go into the regenerated manifest, which must match.
  if (plan.devices && produced.manifest.devices) {
    const dm = produced.manifest.devices;
    const names = [DEVICE_MAP_FILE, ...dm.list.flatMap((d) => dm.formats.map((f) => deviceFile(d.id, f)))];
    const differ: string[] = [];
    for (const name of names) {
      const rec = m.files[name];
      const h = hashFolderFile(folderEntry(dir, name), rec?.bytes ?? MAX_FOLDER_FILE_BYTES);
      if (h) files[name] = { bytes: h.bytes, sha256: h.sha256, ...(name.endsWith(".bin") ? { crc32: hex32(h.crc32) } : {}) };
      if (!h) differ.push(`${name}: missing`);
      else if (!rec) differ.push(`${name}: not listed in the manifest`);
      else if (h.longer || h.bytes !== rec.bytes || h.sha256 !== rec.sha256) differ.push(`${name}: the manifest records ${rec.bytes} bytes, sha256 ${rec.sha256.slice(0, 16)}…; the file is ${h.longer ? `more than ${rec.bytes}` : h.bytes} bytes, sha256 ${h.sha256.slice(0, 16)}…`);
    }
    checks.push({ check: "devices: files = manifest", ok: !differ.length, detail: differ.length ? differ.slice(0, 4).join("; ") + (differ.length > 4 ? `; … ${differ.length - 4} more` : "") : `${names.length} file(s), each size and SHA-256 as recorded (their words are checked below)` });
    const B = plan.beams.count;
    const dev = verifyDevices(dir, { ...m, devices: dm }, plan.devices, {
      name: `recomputed from ${SCENARIO_COPY}`,
      run: (sink) => void runTables(plan, (fi, b, words) => sink(fi * B + b, words), undefined, { commanded: false }),
    });
    checks.push(...dev.checks);
    const d = dev.first;
    if (d) {
      const hx = (x: number) => (x < 0 ? "(past the end of the image)" : "0x" + (x >>> 0).toString(16).toUpperCase().padStart(2 * plan.word.bytes, "0"));
      mismatches.push({ file: d.file, byte: d.address * plan.word.bytes, line: null, pointer: null, frequency_hz: d.beam !== null ? d.frequency_hz : null, beam: d.beam, element: d.element, expected: hx(d.expected), found: hx(d.found), device: d.device, address: d.address, channel: d.channel });
    }
  }

  // 4. files build --compare adds: not derivable, checked against their recorded size and hash
  for (const name of COMPARE_FILES) {
    const rec = m.files[name];
    if (!rec) continue;
    const h = hashFolderFile(folderEntry(dir, name), rec.bytes);
    const ok = !!h && !h.longer && h.bytes === rec.bytes && h.sha256 === rec.sha256;
    checks.push({ check: name, ok, detail: ok ? `as recorded in the manifest (${rec.bytes} bytes; written by build --compare, not recomputable from the inputs)` : !h ? "missing" : `the manifest records ${rec.bytes} bytes, sha256 ${rec.sha256.slice(0, 16)}…; the file is ${h.longer ? `more than ${rec.bytes}` : h.bytes} bytes, sha256 ${h.sha256.slice(0, 16)}…` });
    if (h) files[name] = { bytes: rec.bytes, sha256: rec.sha256 };
  }

  // 5. the manifest, regenerated and compared byte for byte
  const expected: Manifest = produced.manifest;
  expected.tool = { name: "steercode", version: m.tool.version };
  const mm = compareManifest(dir, stableJson(expected, null, 2) + "\n");
  if (mm) mismatches.push(mm);
  checks.push({ check: "manifest.json", ok: !mm, detail: mm ? `differs from the manifest regenerated from the recorded inputs and files at ${describe(mm)}` : `identical to the manifest regenerated from the recorded inputs and files (${Object.keys(files).length} files listed, each size and SHA-256 recomputed)` });

  // 6. files the manifest does not account for (a report, notes) are named, not judged
  const listed = new Set([...Object.keys(files), "manifest.json"]);
  const extra: string[] = [];
  const walk = (rel: string, depth: number) => {
    let names: string[];
    try {
      names = readdirSync(join(dir, rel));
    } catch {
      return;
    }
    for (const n of names.sort()) {
      const r = rel ? `${rel}/${n}` : n;
      let st;
      try {
        st = lstatSync(join(dir, r));
      } catch {
        continue;
      }
      if (st.isDirectory() && depth < 8) walk(r, depth + 1);
      else if (!listed.has(r)) extra.push(st.isSymbolicLink() ? `${r} (a link, not followed)` : st.isDirectory() ? `${r}/` : r);
    }
  };
  walk("", 0);
  if (extra.length) checks.push({ check: "files not in the manifest", ok: true, detail: `${extra.slice(0, 20).join(", ")}${extra.length > 20 ? ` … and ${extra.length - 20} more` : ""} (not checked; not part of the table set)` });
  return done();
}
