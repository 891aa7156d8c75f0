/**
 * Table writers: codes.csv, table.bin, table.h, table.mem, table.json. Each is fed
 * one beam at a time ([frequency][beam][element] order) and streams to disk, so
 * memory stays flat as the beam count grows. Adding a format: see DEVELOPERS.md.
 */
import { join } from "node:path";
import { crc32 } from "node:zlib";
import { stringify } from "csv-stringify/sync";
import type { BeamCodes } from "../core/quantize/contract.js";
import type { OutputKind, Plan } from "../core/plan.js";
import { AsciiBuffer, hexWord, num, piece, putFixed, putHex, putMicros, putPiece, putUint, putUint4, type Piece } from "./format.js";
import { HashedFile, type FileDigest, type HashOptions } from "./hashed.js";

/** Where a writer's bytes go: a file on disk (HashedFile) or, in `verify`, a comparison with the file already there. */
export interface ByteSink {
  write(data: Buffer | Uint8Array | string): void;
  /** bytes the caller reuses at once: consumed now, never kept */
  writeTransient(buf: Buffer): void;
  close(): FileDigest;
}

/** Opens the sink for one output file (`file`: its name inside the folder; `opts.crc32`: its digest needs the CRC-32). */
export type OpenSink = (path: string, file: string, opts?: HashOptions) => ByteSink;

export const openHashedFile: OpenSink = (path, _file, opts) => new HashedFile(path, opts);

export interface TableWriter {
  readonly file: string;
  beam(fi: number, b: number, words: Uint32Array, codes: BeamCodes): void;
  end(): FileDigest;
}

export interface TableContext {
  plan: Plan;
  /** Frequencies as written in the outputs (exact decimal Hz). */
  frequencyText: string[];
}

export const TABLE_FILES: Record<OutputKind, string> = {
  csv: "codes.csv",
  bin: "table.bin",
  c: "table.h",
  mem: "table.mem",
  json: "table.json",
};

export function makeWriters(dir: string, ctx: TableContext, open: OpenSink = openHashedFile): TableWriter[] {
  const out: TableWriter[] = [];
  for (const k of ctx.plan.outputs) {
    const sink = open(join(dir, TABLE_FILES[k]), TABLE_FILES[k], { crc32: k === "bin" });
    if (k === "csv") out.push(new CodesCsvWriter(sink, ctx));
    if (k === "bin") out.push(new BinWriter(sink, ctx));
    // without table.bin among the outputs, table.h keeps the CRC-32 of its bytes itself (no second pass over the tables)
    if (k === "c") out.push(new CHeaderWriter(sink, ctx, !ctx.plan.outputs.includes("bin")));
    if (k === "mem") out.push(new MemWriter(sink, ctx));
    if (k === "json") out.push(new JsonWriter(sink, ctx));
  }
  return out;
}

/** Little-endian bytes of one beam's words, ⌈bits/8⌉ bytes each. */
const LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

export function wordsToBytes(words: Uint32Array, bytes: number): Buffer {
  return new WordBytes(bytes).of(words);
}

/**
 * wordsToBytes into one reused buffer (a beam's bytes are consumed before the next beam):
 * no allocation per beam. The view returned is valid until the next call.
 */
export class WordBytes {
  private u8 = new Uint8Array(0);
  private u16 = new Uint16Array(0);
  private raw = Buffer.alloc(0);
  constructor(private readonly bytes: number) {}
  of(words: Uint32Array): Buffer {
    const n = words.length;
    const bytes = this.bytes;
    if (LITTLE_ENDIAN && bytes === 4) return Buffer.from(words.buffer, words.byteOffset, words.byteLength);
    if (LITTLE_ENDIAN && bytes === 1) {
      // typed-array copies narrow each word (modulo 2^8 / 2^16); on a little-endian host their bytes are the file's bytes
      if (this.u8.length !== n) this.u8 = new Uint8Array(n);
      this.u8.set(words);
      return Buffer.from(this.u8.buffer, 0, n);
    }
    if (LITTLE_ENDIAN && bytes === 2) {
      if (this.u16.length !== n) this.u16 = new Uint16Array(n);
      this.u16.set(words);
      return Buffer.from(this.u16.buffer, 0, 2 * n);
    }
    if (this.raw.length !== n * bytes) this.raw = Buffer.allocUnsafe(n * bytes);
    const buf = this.raw;
    if (bytes === 1) for (let i = 0; i < n; i++) buf[i] = words[i]! & 255;
    else if (bytes === 3)
      for (let i = 0, o = 0; i < n; i++, o += 3) {
        const w = words[i]!;
        buf[o] = w & 255;
        buf[o + 1] = (w >>> 8) & 255;
        buf[o + 2] = (w >>> 16) & 255;
      }
    else if (bytes === 2) for (let i = 0; i < n; i++) buf.writeUInt16LE(words[i]! & 0xffff, 2 * i);
    else for (let i = 0; i < n; i++) buf.writeUInt32LE(words[i]!, 4 * i);
    return buf;
  }
}

class BinWriter implements TableWriter {
  readonly file = TABLE_FILES.bin;
  private readonly f: ByteSink;
  private readonly wb: WordBytes;
  constructor(sink: ByteSink, ctx: TableContext) {
    this.f = sink;
    this.wb = new WordBytes(ctx.plan.word.bytes);
  }
  beam(_fi: number, _b: number, words: Uint32Array): void {
    this.f.writeTransient(this.wb.of(words));
  }
  end(): FileDigest {
    return this.f.close();
  }
}

/** Text writers hand their bytes to the sink once this much has gathered (whole beams: verify locates lines in them). */
const BATCH = 1 << 19;
function flushOut(f: ByteSink, o: AsciiBuffer): void {
  if (o.pos) f.writeTransient(o.view());
}

class CodesCsvWriter implements TableWriter {
  readonly file = TABLE_FILES.csv;
  private readonly f: ByteSink;
  /** "<frequency>," of each frequency */
  private readonly freq: string[];
  private readonly ids: IdText;
  private readonly out = new AsciiBuffer(BATCH + (1 << 16));
  constructor(sink: ByteSink, ctx: TableContext) {
    this.f = sink;
    this.f.write(stringify([["frequency_hz", "beam", "element", "phase_code", "atten_code", "word", "phase_deg", "atten_db"]]));
    this.freq = ctx.frequencyText.map((t) => `${t},`);
    const ids = ctx.plan.elements.ids;
    const n = ids.length;
    const t: IdText = { idLo: new Uint32Array(n), idHi: new Uint32Array(n), idLen: new Uint8Array(n), idLong: null };
    for (let i = 0; i < n; i++) {
      const x = piece(`${ids[i]},`);
      t.idLen[i] = x.length;
      if (x.length > 8) (t.idLong ??= new Array<Piece | null>(n).fill(null))[i] = x;
      else {
        t.idLo[i] = x.words[0]!;
        t.idHi[i] = x.words[1] ?? 0;
      }
    }
    this.ids = t;
  }
  /**
   * Every cell of a codes.csv row is a number we format ourselves (no separators,
   * quotes or line breaks can occur), so rows are written straight into a byte buffer
   * (digit tables, no strings per value): csv-stringify costs ~2 µs a row, which
   * dominated large builds. The header still goes through csv-stringify; a test compares
   * rows with csv-stringify's over random codes, and the build tests read the file back
   * with csv-parse.
   */
  beam(fi: number, b: number, words: Uint32Array, codes: BeamCodes): void {
    const pre = piece(`${this.freq[fi]!}${b},`);
    const n = words.length;
    const o = this.out;
    // a row: prefix, id, three integers ≤ 10 digits, two fixed-point numbers (toFixed text ≤ 30 bytes), separators
    o.ensure(n * (pre.length + 112));
    // the loop is a function of its own: V8 compiles a long loop on stack replacement, and code
    // after the loop inside it (never run when that happened) would be deoptimised at every beam
    o.pos = codesRows(o.dv, o.pos, pre, this.ids, words, codes);
    if (o.pos >= BATCH) flushOut(this.f, o);
  }
  end(): FileDigest {
    flushOut(this.f, this.out);
    return this.f.close();
  }
}

/** "<element id>," of each element: 8 bytes (two little-endian uint32s) and its length; longer ones (ids > 7 digits) in idLong */
interface IdText {
  idLo: Uint32Array;
  idHi: Uint32Array;
  idLen: Uint8Array;
  idLong: (Piece | null)[] | null;
}

/** codes.csv rows of one beam at dv[p…]; returns the position after them. */
function codesRows(dv: DataView, p: number, pre: Piece, ids: IdText, words: Uint32Array, codes: BeamCodes): number {
  const { phaseCode, attenCode, phaseDeg, attenDb } = codes;
  const { idLo, idHi, idLen, idLong } = ids;
  const n = words.length;
  const pw = pre.words;
  const pl = pre.length;
  const nw = pw.length;
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < nw; k++) dv.setUint32(p + 4 * k, pw[k]!, true);
    p += pl;
    if (idLong !== null && idLong[i]) p = putPiece(dv, p, idLong[i]!);
    else {
      dv.setUint32(p, idLo[i]!, true);
      dv.setUint32(p + 4, idHi[i]!, true);
      p += idLen[i]!;
    }
    const pc = phaseCode[i]!;
    p = pc < 10000 ? putUint4(dv, p, pc) : putUint(dv, p, pc);
    dv.setUint8(p++, 44);
    const ac = attenCode[i]!;
    p = ac < 10000 ? putUint4(dv, p, ac) : putUint(dv, p, ac);
    dv.setUint8(p++, 44);
    p = putUint(dv, p, words[i]!);
    dv.setUint8(p++, 44);
    // putFixed6, its first lines inlined (see putMicros)
    const x = phaseDeg[i]!;
    const ax = Math.abs(x);
    if (ax < 2147) {
      const v = Math.round(ax * 1000000) | 0;
      if (v !== 0 && x < 0) dv.setUint8(p++, 45);
      p = putMicros(dv, p, v);
    } else p = putFixed(dv, p, x, 6);
    dv.setUint8(p++, 44);
    const y = attenDb[i]!;
    const ay = Math.abs(y);
    if (ay < 2147) {
      const v = Math.round(ay * 1000000) | 0;
      if (v !== 0 && y < 0) dv.setUint8(p++, 45);
      p = putMicros(dv, p, v);
    } else p = putFixed(dv, p, y, 6);
    dv.setUint8(p++, 10);
  }
  return p;
}

/** "1 frequency", "2 frequencies". */
export function count(n: number, one: string, many: string): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** `$readmemh` memory file (IEEE 1364-2005 §17.2.9): one hex word per line, `//` comments. */
class MemWriter implements TableWriter {
  readonly file = TABLE_FILES.mem;
  private readonly f: ByteSink;
  private readonly digits: number;
  constructor(sink: ByteSink, ctx: TableContext) {
    this.f = sink;
    const p = ctx.plan;
    this.digits = Math.ceil(p.word.bits / 4);
    this.f.write(
      `// steercode beam table for $readmemh: ${count(p.frequenciesHz.length, "frequency", "frequencies")} x ${count(p.beams.count, "beam", "beams")} x ${count(p.elements.count, "element", "elements")}, ${p.word.bits}-bit words\n` +
        `// address = (frequency * ${p.beams.count} + beam) * ${p.elements.count} + element\n`,
    );
  }
  private readonly out = new AsciiBuffer(BATCH + (1 << 16));
  beam(_fi: number, _b: number, words: Uint32Array): void {
    const o = this.out;
    const d = this.digits;
    o.ensure(words.length * (d + 1));
    o.pos = memLines(o.dv, o.pos, words, d);
    if (o.pos >= BATCH) flushOut(this.f, o);
  }
  end(): FileDigest {
    flushOut(this.f, this.out);
    return this.f.close();
  }
}

/** table.mem lines of one beam (a function of its own: see codesRows). */
function memLines(dv: DataView, p: number, words: Uint32Array, d: number): number {
  for (let i = 0; i < words.length; i++) {
    p = putHex(dv, p, words[i]!, d);
    dv.setUint8(p++, 10);
  }
  return p;
}

/**
 * C99 header. The array is declared extern; defining STEERCODE_TABLE_IMPLEMENTATION in
 * exactly one translation unit emits its definition (so the header compiles clean
 * with -Wall -pedantic in any number of files).
 */
const FIRST_WORD = piece("      0x");
const NEXT_LINE = piece(",\n      0x");
const NEXT_WORD = piece(", 0x").words[0]!;

/** One beam's words, twelve a line: "      0x003F, 0x0101, …" (a function of its own: see codesRows). */
function headerWords(dv: DataView, p: number, words: Uint32Array, d: number): number {
  for (let i = 0, col = 0; i < words.length; i++, col++) {
    if (col === 12) col = 0;
    if (col) {
      dv.setUint32(p, NEXT_WORD, true);
      p += 4;
    } else p = putPiece(dv, p, i ? NEXT_LINE : FIRST_WORD);
    p = putHex(dv, p, words[i]!, d);
  }
  return p;
}

class CHeaderWriter implements TableWriter {
  readonly file = TABLE_FILES.c;
  private readonly f: ByteSink;
  private readonly digits: number;
  private lastF = -1;
  private lastB = -1;
  constructor(sink: ByteSink, private readonly ctx: TableContext, ownCrc: boolean) {
    this.f = sink;
    const p = ctx.plan;
    this.digits = Math.ceil(p.word.bits / 4);
    this.binBytes = ownCrc ? new WordBytes(p.word.bytes) : null;
    const ctype = p.word.bytes === 1 ? "uint8_t" : p.word.bytes === 2 ? "uint16_t" : "uint32_t";
    const dims = "[STEERCODE_FREQUENCIES][STEERCODE_BEAMS][STEERCODE_ELEMENTS]";
    this.f.write(
      [
        "/* steercode beam table. Generated file: do not edit; regenerate with `steercode build`. */",
        "#ifndef STEERCODE_TABLE_H",
        "#define STEERCODE_TABLE_H",
        "",
        "#include <stdint.h>",
        "",
        `#define STEERCODE_FREQUENCIES ${p.frequenciesHz.length}u`,
        `#define STEERCODE_BEAMS ${p.beams.count}u`,
        `#define STEERCODE_ELEMENTS ${p.elements.count}u`,
        `#define STEERCODE_WORD_BITS ${p.word.bits}u`,
        `#define STEERCODE_WORD_BYTES ${p.word.bytes}u`,
        `#define STEERCODE_OFF_WORD 0x${hexWord(p.word.off, this.digits)}u`,
        ...p.word.fields.map((f) => `#define STEERCODE_FIELD_${f.name.toUpperCase()}_SHIFT ${f.shift}u\n#define STEERCODE_FIELD_${f.name.toUpperCase()}_WIDTH ${f.width}u`),
        "",
        `typedef ${ctype} steercode_word_t;`,
        `extern const steercode_word_t steercode_table${dims};`,
        "",
        "#ifdef STEERCODE_TABLE_IMPLEMENTATION",
        `const steercode_word_t steercode_table${dims} = {`,
        "",
      ].join("\n"),
    );
  }
  beam(fi: number, b: number, words: Uint32Array): void {
    let s = "";
    if (fi !== this.lastF) {
      if (this.lastF >= 0) s += "\n  },\n";
      s += `  { /* frequency ${fi}: ${this.ctx.frequencyText[fi]} Hz */\n`;
      this.lastF = fi;
      this.lastB = -1;
    }
    if (this.lastB >= 0) s += ",\n";
    this.lastB = b;
    s += `    { /* beam ${b} */\n`;
    const o = this.out;
    const d = this.digits;
    const n = words.length;
    o.ensure(s.length + n * (d + 6) + 16 * Math.ceil(n / 12));
    o.ascii(s);
    o.pos = headerWords(o.dv, o.pos, words, d);
    if (this.binBytes) this.ownCrc = crc32(this.binBytes.of(words), this.ownCrc);
    o.ascii("\n    }");
    this.f.writeTransient(o.view());
  }
  private readonly out = new AsciiBuffer(1 << 16);
  /**
   * The CRC-32 of table.bin goes at the end: it is known only once every word is out.
   * The build sets it from table.bin's digest; without table.bin the writer computes it.
   */
  crc32OfBin: number | null = null;
  private readonly binBytes: WordBytes | null;
  private ownCrc = 0;
  end(): FileDigest {
    if (this.binBytes) this.crc32OfBin = this.ownCrc >>> 0;
    let tail = this.lastF >= 0 ? "\n  }\n};\n#endif /* STEERCODE_TABLE_IMPLEMENTATION */\n\n" : "};\n#endif\n\n";
    tail += `/* CRC-32 (IEEE 802.3) of table.bin: the words above, little-endian, ${this.ctx.plan.word.bytes} byte(s) each */\n`;
    tail += `#define STEERCODE_TABLE_CRC32 0x${(this.crc32OfBin ?? 0).toString(16).toUpperCase().padStart(8, "0")}u\n\n#endif /* STEERCODE_TABLE_H */\n`;
    this.f.write(tail);
    return this.f.close();
  }
}

/** "\n[w,w,…": one beam's words as decimal text (String(w)) (a function of its own: see codesRows). */
function jsonWords(dv: DataView, p: number, words: Uint32Array): number {
  dv.setUint8(p, 10);
  dv.setUint8(p + 1, 91);
  p += 2;
  for (let i = 0; i < words.length; i++) {
    if (i) dv.setUint8(p++, 44);
    p = putUint(dv, p, words[i]!);
  }
  return p;
}

class JsonWriter implements TableWriter {
  readonly file = TABLE_FILES.json;
  private readonly f: ByteSink;
  private lastF = -1;
  constructor(sink: ByteSink, ctx: TableContext) {
    this.f = sink;
    const p = ctx.plan;
    // the beam list is written in slices: its text is never held whole (a million beams are ~100 MB of it)
    this.f.write('{"beams":[\n');
    let beams: string[] = [];
    for (let b = 0; b < p.beams.count; b++) {
      beams.push(`{"az_deg":${num(round9(p.beams.azDeg[b]!))},"beam":${b},"el_deg":${num(round9(p.beams.elDeg[b]!))},"u":${num(round12(p.beams.u[b]!))},"v":${num(round12(p.beams.v[b]!))}}`);
      if (beams.length === 4096 && b + 1 < p.beams.count) {
        this.f.write(beams.join(",\n") + ",\n");
        beams = [];
      }
    }
    const els: string[] = [];
    const e = p.elements;
    for (let i = 0; i < e.count; i++)
      els.push(
        `{${e.channel ? `"channel":${JSON.stringify(e.channel[i])},` : ""}${e.device ? `"device":${JSON.stringify(e.device[i])},` : ""}"element":${e.ids[i]},"enabled":${e.enabled[i] ? "true" : "false"},"x_m":${num(e.x[i]!)},"y_m":${num(e.y[i]!)},"z_m":${num(e.z[i]!)}}`,
      );
    const layout = JSON.stringify({ bits: p.word.bits, bytes: p.word.bytes, fields: p.word.fields.map((f) => ({ name: f.name, shift: f.shift, width: f.width, ...(f.value !== undefined ? { value: f.value } : {}) })), off: p.word.off });
    this.f.write(
      `${beams.join(",\n")}\n],"elements":[\n${els.join(",\n")}\n],"format":"steercode-table/1","frequenciesHz":[${ctx.frequencyText.join(",")}],"layout":${layout},"words":[`,
    );
  }
  private readonly out = new AsciiBuffer(1 << 16);
  beam(fi: number, _b: number, words: Uint32Array): void {
    const o = this.out;
    const n = words.length;
    o.ensure(16 + 11 * n);
    if (fi !== this.lastF) {
      o.ascii(this.lastF >= 0 ? "]],\n[" : "\n[");
      this.lastF = fi;
    } else o.ascii("],");
    o.pos = jsonWords(o.dv, o.pos, words);
    this.f.writeTransient(o.view());
  }
  end(): FileDigest {
    this.f.write(this.lastF >= 0 ? "]]\n]}\n" : "]}\n");
    return this.f.close();
  }
}

function round9(x: number): number {
  return Math.round(x * 1e9) / 1e9 + 0;
}
function round12(x: number): number {
  return Math.round(x * 1e12) / 1e12 + 0;
}
