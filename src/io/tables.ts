/**
 * Table writers: codes.csv, table.bin, table.h, table.mem, table.json. Each is fed
 * one beam at a time ([frequency][beam][element] order) and streams to disk, so
 * memory stays flat as the beam count grows. Adding a format: see DEVELOPERS.md.
 */
import { join } from "node:path";
import { stringify } from "csv-stringify/sync";
import type { BeamCodes } from "../core/quantize/contract.js";
import type { OutputKind, Plan } from "../core/plan.js";
import { AsciiBuffer, hexWord, num } from "./format.js";
import { HashedFile, type FileDigest } from "./hashed.js";

/** Where a writer's bytes go: a file on disk (HashedFile) or, in `verify`, a comparison with the file already there. */
export interface ByteSink {
  write(data: Buffer | Uint8Array | string): void;
  /** bytes the caller reuses at once: consumed now, never kept */
  writeTransient(buf: Buffer): void;
  close(): FileDigest;
}

/** Opens the sink for one output file (`file`: its name inside the folder). */
export type OpenSink = (path: string, file: string) => ByteSink;

export const openHashedFile: OpenSink = (path) => new HashedFile(path);

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
    const sink = open(join(dir, TABLE_FILES[k]), TABLE_FILES[k]);
    if (k === "csv") out.push(new CodesCsvWriter(sink, ctx));
    if (k === "bin") out.push(new BinWriter(sink, ctx));
    if (k === "c") out.push(new CHeaderWriter(sink, ctx));
    if (k === "mem") out.push(new MemWriter(sink, ctx));
    if (k === "json") out.push(new JsonWriter(sink, ctx));
  }
  return out;
}

/** Little-endian bytes of one beam's words, ⌈bits/8⌉ bytes each. */
const LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

export function wordsToBytes(words: Uint32Array, bytes: number): Buffer {
  const n = words.length;
  if (LITTLE_ENDIAN && bytes !== 3) {
    // typed-array copies narrow each word; on a little-endian host their bytes are the file's bytes
    const view = bytes === 1 ? Uint8Array.from(words) : bytes === 2 ? Uint16Array.from(words) : words.slice();
    return Buffer.from(view.buffer, view.byteOffset, view.byteLength);
  }
  const buf = Buffer.allocUnsafe(n * bytes);
  if (bytes === 1) for (let i = 0; i < n; i++) buf[i] = words[i]!;
  else if (bytes === 2) for (let i = 0; i < n; i++) buf.writeUInt16LE(words[i]!, 2 * i);
  else if (bytes === 3) for (let i = 0; i < n; i++) buf.writeUIntLE(words[i]!, 3 * i, 3);
  else for (let i = 0; i < n; i++) buf.writeUInt32LE(words[i]!, 4 * i);
  return buf;
}

class BinWriter implements TableWriter {
  readonly file = TABLE_FILES.bin;
  private readonly f: ByteSink;
  constructor(sink: ByteSink, private readonly ctx: TableContext) {
    this.f = sink;
  }
  beam(_fi: number, _b: number, words: Uint32Array): void {
    this.f.write(wordsToBytes(words, this.ctx.plan.word.bytes));
  }
  end(): FileDigest {
    return this.f.close();
  }
}

class CodesCsvWriter implements TableWriter {
  readonly file = TABLE_FILES.csv;
  private readonly f: ByteSink;
  constructor(sink: ByteSink, private readonly ctx: TableContext) {
    this.f = sink;
    this.f.write(stringify([["frequency_hz", "beam", "element", "phase_code", "atten_code", "word", "phase_deg", "atten_db"]]));
  }
  /**
   * Every cell of a codes.csv row is a number we format ourselves (no separators,
   * quotes or line breaks can occur), so rows are joined directly: csv-stringify
   * costs ~2 µs a row, which dominated large builds. The header still goes through
   * csv-stringify, and the tests read the file back with csv-parse.
   */
  private readonly out = new AsciiBuffer(1 << 16);
  beam(fi: number, b: number, words: Uint32Array, codes: BeamCodes): void {
    const ids = this.ctx.plan.elements.ids;
    const prefix = Buffer.from(`${this.ctx.frequencyText[fi]!},${b},`, "latin1");
    const n = words.length;
    const o = this.out;
    o.ensure(n * (prefix.length + 80));
    for (let i = 0; i < n; i++) {
      o.bytes(prefix);
      o.uint(ids[i]!);
      o.byte(44);
      o.uint(codes.phaseCode[i]!);
      o.byte(44);
      o.uint(codes.attenCode[i]!);
      o.byte(44);
      o.uint(words[i]!);
      o.byte(44);
      o.fixed(codes.phaseDeg[i]!, 6);
      o.byte(44);
      o.fixed(codes.attenDb[i]!, 6);
      o.byte(10);
    }
    this.f.writeTransient(o.view());
  }
  end(): FileDigest {
    return this.f.close();
  }
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
  private readonly out = new AsciiBuffer(1 << 16);
  beam(_fi: number, _b: number, words: Uint32Array): void {
    const o = this.out;
    o.ensure(words.length * (this.digits + 1));
    for (let i = 0; i < words.length; i++) {
      o.hex(words[i]!, this.digits);
      o.byte(10);
    }
    this.f.writeTransient(o.view());
  }
  end(): FileDigest {
    return this.f.close();
  }
}

/**
 * C99 header. The array is declared extern; defining STEERCODE_TABLE_IMPLEMENTATION in
 * exactly one translation unit emits its definition (so the header compiles clean
 * with -Wall -pedantic in any number of files).
 */
const INDENT = Buffer.from("      ");
const NEXT_LINE = Buffer.from(",\n      ");

class CHeaderWriter implements TableWriter {
  readonly file = TABLE_FILES.c;
  private readonly f: ByteSink;
  private readonly digits: number;
  private lastF = -1;
  private lastB = -1;
  constructor(sink: ByteSink, private readonly ctx: TableContext) {
    this.f = sink;
    const p = ctx.plan;
    this.digits = Math.ceil(p.word.bits / 4);
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
    // twelve words a line: "      0x003F, 0x0101, …"
    const o = this.out;
    o.ensure(s.length + words.length * (this.digits + 6) + 16 * Math.ceil(words.length / 12));
    o.ascii(s);
    for (let i = 0; i < words.length; i++) {
      if (i % 12 === 0) o.bytes(i ? NEXT_LINE : INDENT);
      else {
        o.byte(44);
        o.byte(32);
      }
      o.byte(48);
      o.byte(120);
      o.hex(words[i]!, this.digits);
    }
    o.ascii("\n    }");
    this.f.writeTransient(o.view());
  }
  private readonly out = new AsciiBuffer(1 << 16);
  /** The CRC-32 of table.bin goes at the end: it is known only once every word is out. */
  crc32OfBin: number | null = null;
  end(): FileDigest {
    let tail = this.lastF >= 0 ? "\n  }\n};\n#endif /* STEERCODE_TABLE_IMPLEMENTATION */\n\n" : "};\n#endif\n\n";
    tail += `/* CRC-32 (IEEE 802.3) of table.bin: the words above, little-endian, ${this.ctx.plan.word.bytes} byte(s) each */\n`;
    tail += `#define STEERCODE_TABLE_CRC32 0x${(this.crc32OfBin ?? 0).toString(16).toUpperCase().padStart(8, "0")}u\n\n#endif /* STEERCODE_TABLE_H */\n`;
    this.f.write(tail);
    return this.f.close();
  }
}

class JsonWriter implements TableWriter {
  readonly file = TABLE_FILES.json;
  private readonly f: ByteSink;
  private lastF = -1;
  private lastB = -1;
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
  beam(fi: number, _b: number, words: Uint32Array): void {
    let s = "";
    if (fi !== this.lastF) {
      s += this.lastF >= 0 ? "]],\n[" : "\n[";
      this.lastF = fi;
      this.lastB = -1;
    } else s += "],";
    s += (this.lastB >= 0 ? "\n[" : "\n[") + Array.prototype.join.call(words, ",");
    this.lastB = 1;
    this.f.write(s);
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
