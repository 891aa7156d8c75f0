/**
 * The table writers format numbers byte by byte (digit and hex tables, 4-byte stores) and
 * join numeric CSV rows themselves. These tests hold them to reference formatting on
 * random data: String(n), toString(16), fastFixed (string arithmetic), Array.join,
 * csv-stringify for whole CSV files, zlib.crc32 and SHA-256 for the digests.
 */
import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { crc32 } from "node:zlib";
import { stringify } from "csv-stringify/sync";
import { describe, expect, it } from "vitest";
import type { Plan } from "../../src/core/plan.js";
import type { BeamCodes } from "../../src/core/quantize/contract.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { METRICS } from "../../src/core/pattern/analyze.js";
import { SQUINT_COLUMNS, SQUINT_METRICS } from "../../src/core/band.js";
import { OPT, OPT_FIELDS } from "../../src/core/quantize/optimized.js";
import { beamsColumns, OPTIMIZED_COLUMNS, writeBeamsCsv, writeSquintCsv } from "../../src/io/build.js";
import { AsciiBuffer, fastFixed, fixed, hexWord, putFixed, putFixed6, putHex, putUint, SLACK } from "../../src/io/format.js";
import { HashedFile } from "../../src/io/hashed.js";
import { makeWriters, type OpenSink } from "../../src/io/tables.js";
import { tempDir } from "../helpers.js";

const rnd = mulberry32(20261202);
const int = (n: number) => Math.floor(rnd() * n);
/** doubles of every kind a writer can meet: small, large, negative, tiny negative (−0 text), exact halves, near-integers */
function anyDouble(): number {
  switch (int(8)) {
    case 0: return (rnd() - 0.5) * 1e-6;
    case 1: return int(2_000_000) / 4 - 250_000; // quarters: exact halves at 6 digits and below
    case 2: return (rnd() - 0.5) * 6000; // both sides of putFixed6's int32 bound (2147)
    case 3: return (rnd() - 0.5) * 2.2e9; // both sides of putFixed's 1e9 bound
    case 4: return int(360) + (rnd() < 0.5 ? 1 : -1) * 4.9999999e-7; // rounds across an integer
    case 5: return -0;
    case 6: return (rnd() - 0.5) * 1e22;
    default: return rnd() * 360;
  }
}

function text(fn: (dv: DataView, p: number) => number): string {
  const b = new AsciiBuffer(64);
  b.ensure(64);
  b.pos = fn(b.dv, 0);
  return b.take().toString("latin1");
}

describe("number text (reference: String, toString(16), fastFixed)", () => {
  it("putUint writes String(n) (edges and 20 000 random integers up to 2^53)", () => {
    const edges = [0, 9, 10, 99, 100, 999, 1000, 9999, 10000, 99_999_999, 100_000_000, 2 ** 31 - 1, 2 ** 31, 2 ** 32 - 1, 2 ** 32, 1e15, 1e16 - 2, 1e16, 2 ** 53 - 1];
    const bad: string[] = [];
    for (const n of edges) if (text((dv, p) => putUint(dv, p, n)) !== String(n)) bad.push(String(n));
    for (let i = 0; i < 20000; i++) {
      const n = [int(10000), int(1e8), int(2 ** 32), Math.floor(rnd() * 2 ** 53)][i % 4]!;
      if (text((dv, p) => putUint(dv, p, n)) !== String(n)) bad.push(String(n));
    }
    expect(bad).toEqual([]);
  });

  it("putHex and hexWord write the low 4·d bits as d upper-case hex digits, d = 1 … 8 (derived: hexWord's definition)", () => {
    const bad: string[] = [];
    for (let i = 0; i < 20000; i++) {
      const d = 1 + (i % 8);
      const w = Math.floor(rnd() * 2 ** 32);
      const ref = (d === 8 ? w : w % 2 ** (4 * d)).toString(16).toUpperCase().padStart(d, "0");
      if (text((dv, p) => putHex(dv, p, w, d)) !== ref || hexWord(w, d) !== ref) bad.push(`${w} ${d}`);
    }
    expect(bad).toEqual([]);
  });

  it("putFixed / putFixed6 write fastFixed's text for digits 0 … 9, and fall back to toFixed beyond 1e9", () => {
    const bad: string[] = [];
    for (let i = 0; i < 30000; i++) {
      const x = anyDouble();
      const d = i % 10;
      if (text((dv, p) => putFixed(dv, p, x, d)) !== fastFixed(x, d)) bad.push(`${x} ${d}`);
      if (text((dv, p) => putFixed6(dv, p, x)) !== fastFixed(x, 6)) bad.push(`${x} 6`);
    }
    expect(bad).toEqual([]);
    expect(text((dv, p) => putFixed6(dv, p, -1e-9))).toBe("0.000000");
    expect(text((dv, p) => putFixed6(dv, p, 2146.9999999))).toBe("2147.000000");
    expect(text((dv, p) => putFixed(dv, p, 123456789.123456789, 9))).toBe(fastFixed(123456789.123456789, 9));
    expect(() => text((dv, p) => putFixed6(dv, p, NaN))).toThrow(/non-finite/);
  });

  it("stores past the text stay within the buffer's slack", () => {
    const b = new AsciiBuffer(16);
    b.ensure(10);
    expect(b.buf.length).toBeGreaterThanOrEqual(10 + SLACK);
    b.pos = putUint(b.dv, 0, 4294967295);
    expect(b.take().toString("latin1")).toBe("4294967295");
  });
});

// ---- the table writers against reference formatting ---------------------------------------

interface Case {
  plan: Plan;
  ft: string[];
  beams: { fi: number; b: number; words: Uint32Array; codes: BeamCodes }[];
}

function randomCase(bits: number, nf: number, nb: number, n: number, bigIds: boolean, outputs: Plan["outputs"]): Case {
  const bytes = Math.ceil(bits / 8);
  const ids = Int32Array.from({ length: n }, (_, i) => (bigIds && i % 3 === 0 ? 2 ** 31 - 1 - int(1000) * 7 : i * 3 + int(3)));
  const enabled = Uint8Array.from({ length: n }, () => (rnd() < 0.9 ? 1 : 0));
  const el = { count: n, ids, x: Float64Array.from(ids, () => rnd()), y: Float64Array.from(ids, () => rnd()), z: new Float64Array(n), exactX: null, exactY: null, exactZ: null, enabled, row: new Int32Array(n).fill(-1), column: new Int32Array(n).fill(-1), device: null, channel: null };
  const f = (k: number) => Float64Array.from({ length: nb }, () => (rnd() - 0.5) * k);
  const plan = {
    name: "random (invented)",
    frequenciesHz: Array.from({ length: nf }, (_, i) => 27.5e9 + i * 1.25e8),
    frequenciesExact: Array.from({ length: nf }, (_, i) => String(27_500_000_000 + i * 125_000_000)),
    elements: el,
    beams: { count: nb, u: f(1.4), v: f(1.4), w: f(1), azDeg: f(120), elDeg: f(120) },
    word: { bits, bytes, off: int(2 ** Math.min(bits, 30)), fields: [{ name: "phase", shift: 0, width: Math.min(bits, 6) }] },
    outputs,
    element: null,
    band: null,
  } as unknown as Plan;
  const ft = Array.from({ length: nf }, (_, i) => (i === 1 ? "27812500000.5" : String(27_500_000_000 + i * 125_000_000)));
  const beams: Case["beams"] = [];
  for (let fi = 0; fi < nf; fi++)
    for (let b = 0; b < nb; b++) {
      const words = Uint32Array.from({ length: n }, () => (bits === 32 ? Math.floor(rnd() * 2 ** 32) : int(2 ** bits)));
      const codes: BeamCodes = {
        phaseCode: Int32Array.from({ length: n }, () => (rnd() < 0.01 ? 10000 + int(1e6) : int(64))),
        attenCode: Int32Array.from({ length: n }, () => int(64)),
        phaseDeg: Float64Array.from({ length: n }, anyDouble),
        attenDb: Float64Array.from({ length: n }, anyDouble),
        clipped: 0,
      };
      beams.push({ fi, b, words, codes });
    }
  return { plan, ft, beams };
}

/** Runs the real writers into memory; returns each file's bytes. */
function written(c: Case, crcOfBin: number | null = null): Record<string, Buffer> {
  const parts: Record<string, Buffer[]> = {};
  const open: OpenSink = (_p, file) => {
    const a: Buffer[] = [];
    parts[file] = a;
    return { write: (d) => void a.push(Buffer.from(typeof d === "string" ? Buffer.from(d, "utf8") : d)), writeTransient: (d) => void a.push(Buffer.from(d)), close: () => ({ bytes: 0, sha256: "", crc32: 0 }) };
  };
  const ws = makeWriters("/nowhere", { plan: c.plan, frequencyText: c.ft }, open);
  for (const x of c.beams) for (const w of ws) w.beam(x.fi, x.b, x.words, x.codes);
  for (const w of ws) {
    if (crcOfBin !== null && "crc32OfBin" in w) (w as { crc32OfBin: number | null }).crc32OfBin = crcOfBin;
    w.end();
  }
  return Object.fromEntries(Object.entries(parts).map(([k, v]) => [k, Buffer.concat(v)]));
}

const hexRef = (w: number, d: number) => w.toString(16).toUpperCase().padStart(d, "0");
function binRef(c: Case): Buffer {
  const wb = c.plan.word.bytes;
  const out = Buffer.alloc(c.beams.length * c.plan.elements.count * wb);
  let o = 0;
  for (const x of c.beams) for (const w of x.words) (out.writeUIntLE(w, o, wb), (o += wb));
  return out;
}

describe("table writers against reference formatting on random tables", () => {
  const cases: [string, () => Case][] = [
    ["16-bit words, 3 frequencies", () => randomCase(16, 3, 7, 37, false, ["csv", "bin", "c", "mem", "json"])],
    ["32-bit words, element ids up to 2^31 − 1", () => randomCase(32, 2, 5, 29, true, ["csv", "bin", "c", "mem", "json"])],
    ["24-bit words (3 bytes), no table.bin", () => randomCase(24, 2, 4, 25, false, ["csv", "c", "mem", "json"])],
    ["5-bit words (1 byte, 2 hex digits)", () => randomCase(5, 1, 6, 13, false, ["csv", "bin", "c", "mem", "json"])],
    ["13-bit words (4 hex digits), one element", () => randomCase(13, 2, 3, 1, false, ["csv", "bin", "c", "mem", "json"])],
  ];
  for (const [name, make] of cases)
    it(name, () => {
      const c = make();
      const hasBin = c.plan.outputs.includes("bin");
      const got = written(c, hasBin ? 0x1234abcd : null);
      const n = c.plan.elements.count;
      const digits = Math.ceil(c.plan.word.bits / 4);
      const ids = c.plan.elements.ids;

      // codes.csv: the whole file is csv-stringify's, cells as String / fastFixed (reference library: csv-stringify)
      const rows = c.beams.flatMap((x) => Array.from({ length: n }, (_, i) => [c.ft[x.fi]!, String(x.b), String(ids[i]), String(x.codes.phaseCode[i]), String(x.codes.attenCode[i]), String(x.words[i]), fastFixed(x.codes.phaseDeg[i]!, 6), fastFixed(x.codes.attenDb[i]!, 6)]));
      expect(got["codes.csv"]!.toString("latin1")).toBe(stringify([["frequency_hz", "beam", "element", "phase_code", "atten_code", "word", "phase_deg", "atten_db"], ...rows]));

      // table.bin: little-endian words, ⌈bits/8⌉ bytes each
      if (hasBin) expect(got["table.bin"]!.equals(binRef(c))).toBe(true);

      // table.mem: after the // lines, one zero-padded hex word a line
      const mem = got["table.mem"]!.toString("latin1").split("\n");
      const memData = mem.filter((l) => !l.startsWith("//"));
      expect(memData).toEqual([...c.beams.flatMap((x) => Array.from(x.words, (w) => hexRef(w, digits))), ""]);

      // table.json: JSON.parse gives the words; their text is Array.join's, in the writer's layout
      const json = got["table.json"]!.toString("latin1");
      const perF = Array.from({ length: c.ft.length }, (_, fi) => c.beams.filter((x) => x.fi === fi));
      expect(JSON.parse(json).words).toEqual(perF.map((bs) => bs.map((x) => Array.from(x.words))));
      const wordsText = "\n[" + perF.map((bs) => bs.map((x) => "\n[" + Array.prototype.join.call(x.words, ",")).join("],")).join("]],\n[") + "]]\n]}\n";
      expect(json.slice(json.indexOf('"words":[') + 9)).toBe(wordsText);

      // table.h: the array's body, twelve "0x…" words a line; the CRC of table.bin's bytes at the end
      const h = got["table.h"]!.toString("latin1");
      const body = perF
        .map((bs, fi) => `  { /* frequency ${fi}: ${c.ft[fi]} Hz */\n` + bs.map((x) => `    { /* beam ${x.b} */\n` + Array.from({ length: Math.ceil(n / 12) }, (_, l) => "      " + Array.from(x.words.subarray(12 * l, 12 * l + 12), (w) => "0x" + hexRef(w, digits)).join(", ")).join(",\n") + "\n    }").join(",\n"))
        .join("\n  },\n");
      const start = h.indexOf("  { /* frequency 0");
      expect(h.slice(start, h.indexOf("\n  }\n};\n#endif /* STEERCODE_TABLE_IMPLEMENTATION */"))).toBe(body);
      const crc = /#define STEERCODE_TABLE_CRC32 0x([0-9A-F]{8})u/.exec(h)![1];
      expect(parseInt(crc!, 16)).toBe(hasBin ? 0x1234abcd : crc32(binRef(c)) >>> 0);
    });
});

// ---- beams.csv and squint.csv against csv-stringify -------------------------------------------

function memoryOpen(): { open: OpenSink; text: () => string } {
  const parts: Buffer[] = [];
  return {
    open: () => ({ write: (d) => void parts.push(Buffer.from(typeof d === "string" ? Buffer.from(d, "utf8") : d)), writeTransient: (d) => void parts.push(Buffer.from(d)), close: () => ({ bytes: 0, sha256: "", crc32: 0 }) }),
    text: () => Buffer.concat(parts).toString("utf8"),
  };
}
const cell = (x: number, d: number) => (Number.isFinite(x) ? fixed(x, d) : "");
const anyMetric = () => (rnd() < 0.15 ? [NaN, Infinity, -Infinity, -0][int(4)]! : anyDouble());

describe("beams.csv and squint.csv rows are csv-stringify's (reference library: csv-stringify)", () => {
  it("beams.csv over random metrics (empty cells, −0, huge values), with and without the optimized columns and scan loss", () => {
    for (const [withOpt, withElement] of [[false, false], [true, true], [true, false]] as const) {
      const c = randomCase(16, withOpt ? 1 : 2, 2100, 1, false, ["bin"]);
      const plan = { ...c.plan, element: withElement ? { pattern: "cosine", exponent: 1 } : null } as unknown as Plan;
      const nb = plan.beams.count;
      const metrics = Float64Array.from({ length: c.ft.length * nb * METRICS }, anyMetric);
      const opt = withOpt ? Float64Array.from({ length: c.ft.length * nb * OPT_FIELDS }, anyMetric) : null;
      const m = memoryOpen();
      writeBeamsCsv("/nowhere/beams.csv", plan, c.ft, metrics, opt, m.open);
      const digits = [9, 9, 7, 4, 4, 4, 5, 4, 4, 0, 4];
      const shown = withElement ? METRICS : METRICS - 1;
      const rows: string[][] = [];
      for (let fi = 0; fi < c.ft.length; fi++)
        for (let b = 0; b < nb; b++) {
          const o = (fi * nb + b) * METRICS;
          const row = [c.ft[fi]!, String(b), fixed(plan.beams.azDeg[b]!, 6), fixed(plan.beams.elDeg[b]!, 6), fixed(plan.beams.u[b]!, 9), fixed(plan.beams.v[b]!, 9)];
          for (let k = 0; k < shown; k++) row.push(cell(metrics[o + k]!, digits[k]!));
          if (opt) for (const [k, d] of [[OPT.pslBeforeDb, 4], [OPT.gainLossBeforeDb, 4], [OPT.pointingBeforeDeg, 7], [OPT.changed, 0]] as const) row.push(cell(opt[(fi * nb + b) * OPT_FIELDS + k]!, d));
          rows.push(row);
        }
      expect(m.text()).toBe(stringify([[...beamsColumns(plan), ...(opt ? OPTIMIZED_COLUMNS : [])], ...rows]));
    }
  });

  it("squint.csv over random values", () => {
    const c = randomCase(16, 2, 600, 1, false, ["bin"]);
    const bandExact = ["27250000000", "27500000000.25", "28000000000", "28750000000"];
    const plan = { ...c.plan, band: { frequenciesHz: bandExact.map(Number), frequenciesExact: bandExact } } as unknown as Plan;
    const nb = plan.beams.count;
    const nk = bandExact.length;
    const squint = Float64Array.from({ length: c.ft.length * nb * nk * SQUINT_METRICS }, anyMetric);
    const m = memoryOpen();
    writeSquintCsv("/nowhere/squint.csv", plan, c.ft, squint, m.open);
    const rows: string[][] = [];
    for (let fi = 0; fi < c.ft.length; fi++)
      for (let b = 0; b < nb; b++)
        for (let k = 0; k < nk; k++) {
          const o = ((fi * nb + b) * nk + k) * SQUINT_METRICS;
          rows.push([c.ft[fi]!, String(b), bandExact[k]!, ...[9, 9, 7, 5].map((d, j) => cell(squint[o + j]!, d))]);
        }
    expect(m.text()).toBe(stringify([[...SQUINT_COLUMNS], ...rows]));
  });
});

describe("HashedFile", () => {
  it("hashes what it writes, small and large pieces alike, CRC-32 only when asked; buffers reused across files (reference: SHA-256 and zlib.crc32 of the file)", () => {
    const dir = tempDir();
    for (let f = 0; f < 4; f++) {
      const path = join(dir, `f${f}`);
      const withCrc = f % 2 === 0;
      const h = new HashedFile(path, { crc32: withCrc });
      for (let i = 0; i < 12; i++) {
        const len = [1, 100, 70_000, 300_000, 1_100_000][int(5)]!;
        const piece = Buffer.alloc(len, 32 + int(90));
        if (i % 3 === 0) h.write(piece.toString("latin1"));
        else if (i % 3 === 1) h.writeTransient(piece);
        else h.write(new Uint8Array(piece));
      }
      const d = h.close();
      const data = readFileSync(path);
      expect(d.bytes).toBe(data.length);
      expect(d.sha256).toBe(createHash("sha256").update(data).digest("hex"));
      expect(d.crc32).toBe(withCrc ? crc32(data) >>> 0 : 0);
    }
  });
});
