/**
 * Device images end to end: addresses by the contract's formula, a scrambled map,
 * padding, Intel HEX record rules, an independent Intel HEX reader (python3-intelhex),
 * $readmemh under iverilog, verify finding flipped bits, diff per device, check.
 */
import { execFileSync } from "node:child_process";
import { existsSync, readFileSync, readdirSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { beforeAll, describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";
import { buildDeviceMap, defaultAssignment, type DeviceSpec } from "../../src/core/devices.js";
import { DeviceImageWriter } from "../../src/formats/device-images.js";
import { runTables } from "../../src/core/engine.js";
import { loadBuildScenario, readManifest } from "../../src/io/readbuild.js";
import { verifyDevices } from "../../src/workflows/devices.js";
import { openImageReader } from "../../src/formats/device-read.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";

const FIX = join(import.meta.dirname, "..", "fixtures");

/** element → [device, channel]; rows written in a scrambled order */
const SCRAMBLED: [number, number, number][] = [[5, 3, 1], [0, 7, 2], [3, 3, 3], [6, 7, 1], [1, 3, 0], [7, 3, 2], [2, 7, 0], [4, 7, 3]];
const CAL = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 8 }, (_, i) => `${i},${(i * 47.3) % 360},${(i % 3) * 0.7}`).join("\n") + "\n";

interface Built {
  dir: string;
  wb: number;
  /** device id → channel → element */
  layout: { base: number; S: number; T: number; fill: number; beams: number; freqs: number };
  chan: Map<number, [number, number]>;
}

/** The image a device must hold, built in the test from codes.csv and the formula (derived: contract "devices"). */
function expectedImage(b: Built, device: number): number[] {
  const rows = parse(readFileSync(join(b.dir, "codes.csv")), { from_line: 2 }) as string[][];
  const freqs = [...new Set(rows.map((r) => r[0]!))];
  const { base, S, T, fill, beams } = b.layout;
  const cells = new Map<number, number>();
  for (const r of rows) {
    const [dev, ch] = b.chan.get(Number(r[2]))!;
    if (dev !== device) continue;
    const blk = freqs.indexOf(r[0]!) * beams + Number(r[1]);
    cells.set(base + blk * S + ch * T, Number(r[5]));
  }
  const n = Math.max(...cells.keys()) + 1;
  return Array.from({ length: n }, (_, a) => cells.get(a) ?? fill);
}

function binWords(p: string, wb: number): number[] {
  const buf = readFileSync(p);
  return Array.from({ length: buf.length / wb }, (_, i) => buf.readUIntLE(i * wb, wb));
}

function deviceIds(dir: string): number[] {
  return readdirSync(join(dir, "devices")).filter((f) => f.endsWith(".bin")).map((f) => Number(/dev-(\d+)\.bin/.exec(f)![1])).sort((a, b) => a - b);
}

let scrambled: Built, wide: Built, channelMajor: Built;
let scrambledScenario = "";
let channelMajorScenario = "";

beforeAll(() => {
  const t = tempDir("steercode-devices-");
  // 1. scrambled map, padding (beamStride 6 > 4 channels), fill 0xABCD, base 3, two frequencies, a disabled element
  const s1 = writeScenario(
    baseScenario({
      frequency: ["10 GHz", "10.5 GHz"],
      array: { lattice: { kind: "rectangular", columns: 4, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" }, disabled: [2] },
      calibration: "cal.csv",
      devices: { channels: 4, map: "dev.csv", address: { base: 3, beamStride: 6, channelStride: 1 }, fill: 0xabcd },
    }),
    { "cal.csv": CAL, "dev.csv": "element,device,channel\n" + SCRAMBLED.map((r) => r.join(",")).join("\n") + "\n" },
    join(t, "s1"),
  );
  // 2. 32-bit words, all data past 64 KiB (base 20000 words = 80000 bytes): type 04 records
  const s2 = writeScenario(
    baseScenario({
      array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
      word: { bits: 32, off: 0, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 16, width: 8 }, { name: "load", shift: 31, width: 1, value: 1 }] },
      calibration: undefined,
      devices: { channels: 2, address: { base: 20000 }, fill: 0x12345678 },
    }),
    {},
    join(t, "s2"),
  );
  // 3. channel-major (beamStride 1, channelStride 8): written positionally, padding between channels
  const s3 = writeScenario(baseScenario({ calibration: "cal.csv", devices: { channels: 4, address: { beamStride: 1, channelStride: 8 }, formats: ["mem", "hex"] } }), { "cal.csv": CAL }, join(t, "s3"));
  scrambledScenario = s1;
  channelMajorScenario = s3;
  for (const [s, o] of [[s1, "b1"], [s2, "b2"], [s3, "b3"]] as const) {
    const r = cli(["build", s, "-o", join(t, o), "--no-analysis"]);
    expect(r.code, r.stderr).toBe(0);
  }
  scrambled = { dir: join(t, "b1"), wb: 2, layout: { base: 3, S: 6, T: 1, fill: 0xabcd, beams: 3, freqs: 2 }, chan: new Map(SCRAMBLED.map(([e, d, c]) => [e, [d, c]])) };
  wide = { dir: join(t, "b2"), wb: 4, layout: { base: 20000, S: 2, T: 1, fill: 0x12345678, beams: 3, freqs: 1 }, chan: new Map([[0, [0, 0]], [1, [0, 1]]]) };
  channelMajor = { dir: join(t, "b3"), wb: 2, layout: { base: 0, S: 1, T: 8, fill: 0, beams: 3, freqs: 1 }, chan: new Map(Array.from({ length: 8 }, (_, e) => [e, [e >> 2, e & 3]])) };
});

/** Intel HEX records of a file, checked against the published record rules. */
function hexRecords(text: string) {
  // source: Intel, "Hexadecimal Object File Format Specification", rev. A, 1988 (from memory):
  // ":" LL AAAA TT data CC; CC is the two's complement of the sum of all other bytes, so every
  // record's bytes sum to 0 mod 256; type 04 gives the upper 16 bits of the address; the end record is ":00000001FF".
  const lines = text.split("\n").filter((l) => l !== "");
  return lines.map((l) => {
    expect(l).toMatch(/^:([0-9A-F]{2})+$/);
    const b = Buffer.from(l.slice(1), "hex");
    expect(b.length).toBe(b[0]! + 5);
    expect(b.reduce((s, x) => s + x, 0) % 256).toBe(0);
    return { len: b[0]!, addr: b.readUInt16BE(1), type: b[3]!, data: b.subarray(4, 4 + b[0]!), line: l };
  });
}

function decodeHexByRules(text: string): Buffer {
  const recs = hexRecords(text);
  expect(recs[recs.length - 1]!.line).toBe(":00000001FF");
  let upper = 0;
  const parts: Buffer[] = [];
  let next = 0;
  for (const r of recs.slice(0, -1)) {
    if (r.type === 4) {
      upper = r.data.readUInt16BE(0);
      continue;
    }
    expect(r.type).toBe(0);
    expect(upper * 65536 + r.addr).toBe(next);
    expect(r.addr + r.len).toBeLessThanOrEqual(65536);
    parts.push(r.data);
    next += r.len;
  }
  return Buffer.concat(parts);
}

describe("device images", () => {
  it("scrambled map: every image holds each word at base + (f·beams + b)·beamStride + c·channelStride, padding = fill", () => {
    const ids = deviceIds(scrambled.dir);
    expect(ids).toEqual([3, 7]);
    for (const id of ids) {
      const exp = expectedImage(scrambled, id);
      expect(exp.length).toBe(3 + 5 * 6 + 3 + 1); // derived: last address base + (2·3 − 1)·6 + 3
      const bin = binWords(join(scrambled.dir, `devices/dev-${id}.bin`), 2);
      expect(bin).toEqual(exp);
      // padding: addresses 0–2 (base) and 4 … 5 of each 6-word block hold the fill word
      for (let blk = 0; blk < 6; blk++) for (const a of [3 + blk * 6 + 4, 3 + blk * 6 + 5]) if (a < bin.length) expect(bin[a]).toBe(0xabcd);
      expect(bin.slice(0, 3)).toEqual([0xabcd, 0xabcd, 0xabcd]);
      const mem = readFileSync(join(scrambled.dir, `devices/dev-${id}.mem`), "utf8").split("\n").filter((l) => l && !l.startsWith("//")).map((l) => parseInt(l, 16));
      expect(mem).toEqual(exp);
      const hex = decodeHexByRules(readFileSync(join(scrambled.dir, `devices/dev-${id}.hex`), "latin1"));
      expect(hex.equals(readFileSync(join(scrambled.dir, `devices/dev-${id}.bin`)))).toBe(true);
    }
    // the disabled element 2 (device 7 channel 0) holds the off word (0) in every beam
    const d7 = binWords(join(scrambled.dir, "devices/dev-7.bin"), 2);
    for (let blk = 0; blk < 6; blk++) expect(d7[3 + blk * 6]).toBe(0);
    // map.csv: device,channel,element ascending by device and channel
    const map = readFileSync(join(scrambled.dir, "devices/map.csv"), "utf8");
    expect(map).toBe("device,channel,element\n3,0,1\n3,1,5\n3,2,7\n3,3,3\n7,0,2\n7,1,6\n7,2,0\n7,3,4\n");
    // the map file is copied into inputs/ and every device file is in the manifest (CRC-32 for .bin)
    const m = JSON.parse(readFileSync(join(scrambled.dir, "manifest.json"), "utf8"));
    expect(m.files["inputs/devices.csv"]).toBeDefined();
    for (const id of ids) {
      expect(m.files[`devices/dev-${id}.bin`].crc32).toMatch(/^0x[0-9A-F]{8}$/);
      expect(m.files[`devices/dev-${id}.mem`].sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(m.files[`devices/dev-${id}.hex`].crc32).toBeUndefined();
    }
    expect(m.devices.list).toEqual([{ id: 3, channelsUsed: 4, words: 37, bytes: 74 }, { id: 7, channelsUsed: 4, words: 37, bytes: 74 }]);
  });

  it("32-bit words past 64 KiB: type 04 records, default order, 32-bit fill", () => {
    const exp = expectedImage(wide, 0);
    expect(exp.length).toBe(20000 + 2 * 2 + 1 + 1);
    expect(binWords(join(wide.dir, "devices/dev-0.bin"), 4)).toEqual(exp);
    const text = readFileSync(join(wide.dir, "devices/dev-0.hex"), "latin1");
    const recs = hexRecords(text);
    const ela = recs.filter((r) => r.type === 4);
    expect(ela.map((r) => r.line)).toEqual([":020000040001F9"]); // upper 16 bits = 1 from byte 65536 on
    // the 04 record comes right before the first data record at or past 64 KiB (byte 65536 = record 4096)
    expect(recs.indexOf(ela[0]!)).toBe(4096);
    expect(decodeHexByRules(text).equals(readFileSync(join(wide.dir, "devices/dev-0.bin")))).toBe(true);
  });

  it("channel-major layout (positional writes): images by the formula; mem and hex only (no .bin kept)", () => {
    expect(readdirSync(join(channelMajor.dir, "devices")).sort()).toEqual(["dev-0.hex", "dev-0.mem", "dev-1.hex", "dev-1.mem", "map.csv"]);
    for (const id of [0, 1]) {
      const exp = expectedImage(channelMajor, id);
      expect(exp.length).toBe(3 * 8 + 2 + 1);
      const hex = decodeHexByRules(readFileSync(join(channelMajor.dir, `devices/dev-${id}.hex`), "latin1"));
      expect(Array.from({ length: hex.length / 2 }, (_, i) => hex.readUInt16LE(2 * i))).toEqual(exp);
    }
  });

  itWith([TOOLS.intelhex], "every .hex is read back by python3-intelhex to the .bin's bytes", () => {
    for (const b of [scrambled, wide, channelMajor]) {
      const files = readdirSync(join(b.dir, "devices")).filter((f) => f.endsWith(".hex")).map((f) => join(b.dir, "devices", f));
      // reference library: python3-intelhex 2.3.0 (Debian), IntelHex.loadhex + tobinstr
      const out = JSON.parse(execFileSync("/usr/bin/python3", [join(FIX, "intelhex", "read_hex.py"), ...files], { encoding: "utf8" }));
      for (const f of files) {
        const r = out.files[f];
        const id = Number(/dev-(\d+)\.hex/.exec(f)![1]);
        const exp = expectedImage(b, id);
        expect(r.minaddr).toBe(0);
        expect(r.maxaddr).toBe(exp.length * b.wb - 1);
        expect(r.segments).toEqual([[0, exp.length * b.wb]]);
        const bytes = Buffer.from(r.bytes_hex, "hex");
        expect(Array.from({ length: exp.length }, (_, i) => bytes.readUIntLE(i * b.wb, b.wb))).toEqual(exp);
      }
    }
  });

  itWith([TOOLS.iverilog], "every .mem loads with $readmemh under iverilog, word by word equal to the image", () => {
    const work = tempDir("steercode-iverilog-");
    for (const b of [scrambled, wide, channelMajor]) {
      for (const f of readdirSync(join(b.dir, "devices")).filter((x) => x.endsWith(".mem"))) {
        const id = Number(/dev-(\d+)\.mem/.exec(f)![1]);
        const exp = expectedImage(b, id);
        const tb = join(work, `tb-${id}-${b.wb}-${exp.length}`);
        // source: IEEE 1364-2005 §17.2.9 ($readmemh); reference tool: Debian iverilog
        execFileSync("iverilog", ["-g2005", `-DMEMFILE="${join(b.dir, "devices", f)}"`, `-Ptb.WORDS=${exp.length}`, `-Ptb.WIDTH=${b.wb * 8}`, "-o", tb, join(FIX, "iverilog", "readmemh_tb.v")]);
        const out = execFileSync("vvp", ["-n", tb], { encoding: "utf8" });
        const words = out.split("\n").filter((l) => /^[0-9a-fxz]+$/i.test(l.trim())).map((l) => parseInt(l, 16));
        expect(words, `${b.dir} ${f}`).toEqual(exp);
      }
    }
  });

  it("verify passes every build and names a flipped bit in any image by device, address, beam, channel and element", () => {
    for (const b of [scrambled, wide, channelMajor]) expect(cli(["verify", b.dir]).code).toBe(0);
    const flip = (file: string, edit: (buf: Buffer) => Buffer) => {
      const p = join(scrambled.dir, file);
      const orig = readFileSync(p);
      writeFileSync(p, edit(Buffer.from(orig)));
      const r = cli(["verify", scrambled.dir]);
      writeFileSync(p, orig);
      return r;
    };
    // device 3, address 3 + 1·6 + 2 = 11: beam 1, channel 2 = element 7 (derived from the map)
    let r = flip("devices/dev-3.bin", (buf) => ((buf[22] = buf[22]! ^ 0x10), buf));
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/first mismatch: devices\/dev-3\.bin, device 3, address 11, frequency 10000000000 Hz, beam 1, channel 2, element 7/);
    expect(r.stdout).toMatch(/FAIL {2}devices: dev-\*\.bin = recomputed from inputs\/scenario\.json/);
    // .mem: line of address 11 (two comment lines first)
    r = flip("devices/dev-3.mem", (buf) => {
      const lines = buf.toString("utf8").split("\n");
      lines[2 + 11] = (parseInt(lines[2 + 11]!, 16) ^ 1).toString(16).toUpperCase().padStart(4, "0");
      return Buffer.from(lines.join("\n"));
    });
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/devices\/dev-3\.mem, device 3, address 11, frequency 10000000000 Hz, beam 1, channel 2, element 7/);
    // .hex: flip a data bit and repair the record's checksum, so only the word is wrong
    r = flip("devices/dev-7.hex", (buf) => {
      const lines = buf.toString("latin1").split("\n");
      const rec = Buffer.from(lines[1]!.slice(1), "hex"); // bytes 16–31 = addresses 8–15
      rec[4 + 6] = rec[4 + 6]! ^ 0x01; // byte 22 = address 11, low byte
      rec[rec.length - 1] = (256 - (rec.subarray(0, rec.length - 1).reduce((s, x) => s + x, 0) % 256)) % 256;
      lines[1] = ":" + rec.toString("hex").toUpperCase();
      return Buffer.from(lines.join("\n"), "latin1");
    });
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/devices\/dev-7\.hex, device 7, address 11, frequency 10000000000 Hz, beam 1, channel 2, element 0/);
    // a padding word that is not the fill word
    r = flip("devices/dev-3.bin", (buf) => ((buf[2 * 7] = buf[2 * 7]! ^ 1), buf));
    expect(r.stdout).toMatch(/devices\/dev-3\.bin, device 3, address 7, an unused address \(fill word\)/);
    // a broken checksum is named with its line
    r = flip("devices/dev-3.hex", (buf) => Buffer.from(buf.toString("latin1").replace(/^(:10000000.{30})(.)/m, (_, a, c) => a + (c === "0" ? "1" : "0")), "latin1"));
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/devices: dev-\*\.hex readable: devices\/dev-3\.hex: line 1: checksum/);
  });

  it("diff says per device how many words changed and where", () => {
    const t = tempDir();
    const doc = JSON.parse(readFileSync(join(scrambled.dir, "inputs/scenario.json"), "utf8"));
    doc.array.disabled = [2, 6]; // element 6 = device 7 channel 1
    const s = writeScenario(doc, { "cal.csv": CAL, "dev.csv": readFileSync(join(scrambled.dir, "inputs/devices.csv"), "utf8") }, join(t, "s"));
    const r = cli(["build", s, "-o", join(t, "b"), "--no-analysis", "--compare", scrambled.dir]);
    expect(r.code, r.stderr).toBe(0);
    const changes = parse(readFileSync(join(t, "b", "changes.csv")), { from_line: 2 }) as string[][];
    const freqs = ["10000000000", "10500000000"];
    // derived: each changed word of element 6 sits at 3 + (f·3 + beam)·6 + 1 on device 7
    const addrs = changes.map((c) => 3 + (freqs.indexOf(c[0]!) * 3 + Number(c[1])) * 6 + 1).sort((a, b) => a - b);
    expect(changes.every((c) => c[2] === "6")).toBe(true);
    const d = JSON.parse(cli(["diff", scrambled.dir, join(t, "b"), "--json"]).stdout).summary.devices;
    expect(d).toEqual({ layoutChanged: false, devices: 2, devicesChanged: 1, changed: [{ device: 7, wordsChanged: changes.length, ranges: addrs.map((a) => [a, a]) }] });
    expect(r.stdout).toMatch(new RegExp(`device 7: ${changes.length} word\\(s\\) at addresses ${addrs.join(", ")}`));
    // the report of the new build says the same, per device
    expect(cli(["report", join(t, "b")]).code).toBe(0);
    const html = readFileSync(join(t, "b", "report.html"), "utf8");
    expect(html).toMatch(new RegExp(`<tr><td>7</td><td>${changes.length}</td><td[^>]*>${addrs.map((a) => `${a}–${a}`).join(", ")}</td></tr>`));
    expect(html).toMatch(/1 of 2 device\(s\) changed/);
  });

  it("diff: every word equal but another device layout, or no device images any more, is a difference (exit 1)", () => {
    const t = tempDir();
    const doc = JSON.parse(readFileSync(join(scrambled.dir, "inputs/scenario.json"), "utf8"));
    const files = { "cal.csv": CAL, "dev.csv": readFileSync(join(scrambled.dir, "inputs/devices.csv"), "utf8") };
    // the same tables, another beam stride: every image must be reloaded in full
    const restrided = writeScenario({ ...doc, devices: { ...doc.devices, address: { base: 3, beamStride: 8, channelStride: 1 } } }, files, join(t, "s1"));
    expect(cli(["build", restrided, "-o", join(t, "b1"), "--no-analysis"]).code).toBe(0);
    const r1 = cli(["diff", scrambled.dir, join(t, "b1")]);
    expect(r1.code, r1.stderr).toBe(1);
    expect(r1.stdout).toMatch(/^all \d+ words agree, but the device images differ \(another device layout: reload every image\)/);
    const j1 = JSON.parse(cli(["diff", scrambled.dir, join(t, "b1"), "--json"]).stdout);
    expect(j1.identical).toBe(false);
    expect(j1.summary.wordsChanged).toBe(0);
    expect(j1.summary.devices.layoutChanged).toBe(true);
    // the same tables without the devices key: the old images have no successor
    const { devices: _dropped, ...plain } = doc;
    const s2 = writeScenario(plain, files, join(t, "s2"));
    expect(cli(["build", s2, "-o", join(t, "b2"), "--no-analysis"]).code).toBe(0);
    const r2 = cli(["diff", scrambled.dir, join(t, "b2")]);
    expect(r2.code, r2.stderr).toBe(1);
    expect(r2.stdout).toMatch(/the new build writes no device images/);
    // and a rebuild of the same scenario is identical (exit 0)
    const same = writeScenario(doc, files, join(t, "s3"));
    expect(cli(["build", same, "-o", join(t, "b3"), "--no-analysis"]).code).toBe(0);
    expect(cli(["diff", scrambled.dir, join(t, "b3")]).code).toBe(0);
  });

  it("check prints per device channels, addresses, image size and full-load time", () => {
    const r = cli(["check", scrambledScenario, "--bus-clock", "10MHz", "--bus-overhead-bits", "8", "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const d = JSON.parse(r.stdout).devices;
    // derived: 37 words × (16 + 8) bits / 10 MHz = 88.8 µs; 2 frequencies × 3 beams × 4 channels = 24 addresses used
    expect(d.list).toEqual([
      { id: 3, channelsUsed: 4, addressesUsed: 24, words: 37, bytes: 74, loadSeconds: expect.closeTo(88.8e-6, 12) },
      { id: 7, channelsUsed: 4, addressesUsed: 24, words: 37, bytes: 74, loadSeconds: expect.closeTo(88.8e-6, 12) },
    ]);
    const text = cli(["check", scrambledScenario, "--bus-clock", "10MHz", "--bus-overhead-bits", "8"]).stdout;
    // ids 3 and 7 are not neighbours: one line each (a run of consecutive ids with equal figures shares a line)
    expect(text).toMatch(/device 3 +4 channel\(s\) used, 24 addresses used, image 37 words = 74 bytes, full load 88\.80 µs\n {2}device 7 +4 channel/);
    expect(text).toMatch(/all images one after another 177\.6 µs/);
    const grouped = cli(["check", channelMajorScenario, "--bus-clock", "1 MHz"]).stdout;
    // derived: 27 words × 16 bits / 1 MHz = 432 µs
    expect(grouped).toMatch(/devices 0–1 +4 channel\(s\) used, 12 addresses used, image 27 words = 54 bytes, full load 432\.0 µs each/);
  });

  it("a scenario without devices writes no devices folder and no manifest key", () => {
    const t = tempDir();
    expect(cli(["build", writeScenario(baseScenario(), {}, join(t, "s")), "-o", join(t, "b"), "--no-analysis"]).code).toBe(0);
    expect(existsSync(join(t, "b", "devices"))).toBe(false);
    expect("devices" in JSON.parse(readFileSync(join(t, "b", "manifest.json"), "utf8"))).toBe(false);
  });
});

describe("device assignment from elements.csv", () => {
  it("the device and channel columns place each element; verify passes", () => {
    const t = tempDir();
    // elements 10, 11, 12, 13 with devices given in the file (ids need not start at 0)
    const els = "element,x_m,y_m,device,channel\n10,0,0,5,1\n11,0.015,0,5,0\n12,0.03,0,2,3\n13,0.045,0,2,0\n";
    const s = writeScenario(baseScenario({ array: { elements: "el.csv" }, devices: { channels: 4, formats: ["bin"] } }), { "el.csv": els }, join(t, "s"));
    const r = cli(["build", s, "-o", join(t, "b"), "--no-analysis"]);
    expect(r.code, r.stderr).toBe(0);
    expect(readFileSync(join(t, "b", "devices", "map.csv"), "utf8")).toBe("device,channel,element\n2,0,13\n2,3,12\n5,0,11\n5,1,10\n");
    expect(readdirSync(join(t, "b", "devices")).sort()).toEqual(["dev-2.bin", "dev-5.bin", "map.csv"]);
    // device 2 uses channels 0 and 3: 3 beams × beamStride 4, last address (3 − 1)·4 + 3 = 11 → 12 words (derived)
    expect(readFileSync(join(t, "b", "devices", "dev-2.bin")).length).toBe(12 * 2);
    expect(readFileSync(join(t, "b", "devices", "dev-5.bin")).length).toBe(((3 - 1) * 4 + 1 + 1) * 2);
    expect(cli(["verify", join(t, "b")]).code).toBe(0);
  });
});

describe("less common layouts", () => {
  it("positional with beamStride > 1 (patched regions) agrees with the formula", () => {
    const t = tempDir();
    const cases = [
      // channel c at 10·c + 3·block: channels interleave with gaps (not in address order)
      { name: "interleaved", devices: { channels: 2, address: { beamStride: 3, channelStride: 10 }, fill: 7, formats: ["bin", "hex"] }, S: 3, T: 10, fill: 7 },
    ];
    for (const c of cases) {
      const s = writeScenario(baseScenario({ calibration: "cal.csv", devices: c.devices }), { "cal.csv": CAL }, join(t, c.name));
      const dir = join(t, `${c.name}-out`);
      const r = cli(["build", s, "-o", dir, "--no-analysis"]);
      expect(r.code, r.stderr).toBe(0);
      const channels = c.devices.channels;
      const b: Built = { dir, wb: 2, layout: { base: 0, S: c.S, T: c.T, fill: c.fill, beams: 3, freqs: 1 }, chan: new Map(Array.from({ length: 8 }, (_, e) => [e, [Math.floor(e / channels), e % channels]])) };
      for (const id of deviceIds(dir)) {
        const exp = expectedImage(b, id);
        const want = Buffer.alloc(exp.length * 2);
        exp.forEach((w, i) => want.writeUInt16LE(w, 2 * i));
        expect(readFileSync(join(dir, `devices/dev-${id}.bin`)).equals(want), `${c.name} device ${id}`).toBe(true);
      }
      expect(cli(["verify", dir]).code).toBe(0);
    }
  });
});

describe("the image writer on its own (small buffers reach every path)", () => {
  // derived: the contract's address formula, evaluated here word by word
  const layouts = [
    { name: "blocks larger than the buffer (word by word, fill between)", channels: 4, base: 5, S: 300, T: 1 },
    { name: "whole blocks from the fill template, many flushes", channels: 4, base: 2, S: 6, T: 1 },
    { name: "channel-major, several positional flushes", channels: 4, base: 1, S: 1, T: 300 },
    { name: "interleaved, patched regions", channels: 2, base: 0, S: 3, T: 1000 },
  ];
  for (const L of layouts)
    it(L.name, () => {
      const E = 8, blocks = 100, wb = 2, fill = 9;
      const d = defaultAssignment(E, L.channels);
      const spec: DeviceSpec = { channels: L.channels, base: L.base, beamStride: L.S, channelStride: L.T, fill, formats: ["bin", "mem", "hex"], source: "default", ...d };
      const map = buildDeviceMap(spec, blocks);
      const root = tempDir();
      const w = new DeviceImageWriter(root, { map, wordBits: 16, wordBytes: wb, beams: 50, bufferBytes: 1024 });
      const words = new Uint32Array(E);
      for (let blk = 0; blk < blocks; blk++) {
        for (let e = 0; e < E; e++) words[e] = (blk * 37 + e * 1009) & 0xffff;
        w.beam(Math.floor(blk / 50), blk % 50, words);
      }
      const files = w.end(Int32Array.from({ length: E }, (_, e) => e));
      for (const dev of map.devices) {
        const img = new Array<number>(dev.words).fill(fill);
        for (let blk = 0; blk < blocks; blk++) for (let e = 0; e < E; e++) if (d.device[e] === dev.id) img[L.base + blk * L.S + d.channel[e]! * L.T] = (blk * 37 + e * 1009) & 0xffff;
        const bin = readFileSync(join(root, `devices/dev-${dev.id}.bin`));
        const want = Buffer.alloc(img.length * wb);
        img.forEach((x, i) => want.writeUInt16LE(x, i * wb));
        expect(bin.equals(want)).toBe(true);
        expect(files[`devices/dev-${dev.id}.bin`]!.bytes).toBe(img.length * wb);
        expect(decodeHexByRules(readFileSync(join(root, `devices/dev-${dev.id}.hex`), "latin1")).equals(bin)).toBe(true);
        const mem = readFileSync(join(root, `devices/dev-${dev.id}.mem`), "utf8").split("\n").filter((l) => l && !l.startsWith("//")).map((l) => parseInt(l, 16));
        expect(mem.length === img.length && mem.every((x, i) => x === img[i])).toBe(true);
      }
    });
});

describe("image readers stream in chunks", () => {
  it("any chunk size and any read size give the .bin's words, for .bin, .mem and .hex (multi-byte text across chunk edges too)", () => {
    const rnd = mulberry32(11);
    for (const b of [scrambled, wide]) {
      for (const id of deviceIds(b.dir)) {
        const want = binWords(join(b.dir, `devices/dev-${id}.bin`), b.wb);
        for (const fmt of ["bin", "mem", "hex"] as const)
          for (const chunk of [b.wb, 3, 7, 64, 1 << 20]) {
            const r = openImageReader(fmt, join(b.dir, `devices/dev-${id}.${fmt}`), b.wb, chunk);
            const got: number[] = [];
            for (;;) {
              const w = r.read(1 + Math.floor(rnd() * 9));
              if (!w.length) break;
              got.push(...w);
            }
            r.close();
            expect(got, `${fmt} chunk ${chunk}`).toEqual(want);
          }
      }
    }
    // a .mem comment with a multi-byte character split by the chunk edge decodes the same
    const t = tempDir();
    const p = join(t, "x.mem");
    writeFileSync(p, "// é€ comment\n00AB\n// ü\n1234 5678\n");
    for (const chunk of [1, 2, 3, 5]) {
      const r = openImageReader("mem", p, 2, chunk);
      expect(Array.from(r.read(10))).toEqual([0xab, 0x1234, 0x5678]);
      r.close();
    }
  });
});

/** A fresh channel-major device build (2 devices, padding filled with 7) and a table pass that counts its runs. */
function channelMajorBuild() {
  const t = tempDir();
  const s = writeScenario(baseScenario({ calibration: "cal.csv", devices: { channels: 4, address: { beamStride: 1, channelStride: 10 }, fill: 7 } }), { "cal.csv": CAL }, join(t, "s"));
  const dir = join(t, "b");
  expect(cli(["build", s, "-o", dir, "--no-analysis"]).code).toBe(0);
  const m = readManifest(dir);
  const plan = loadBuildScenario(dir, m).plan;
  const counter = { passes: 0 };
  const words = {
    name: "recomputed",
    run: (sink: (blk: number, w: ArrayLike<number>) => void) => {
      counter.passes++;
      runTables(plan, (fi, b, w) => sink(fi * plan.beams.count + b, w), undefined, { commanded: false });
    },
  };
  return { dir, m, plan, words, counter };
}

describe("verify's device check in batches, and device files as recorded", () => {
  // derived: the contract's address formula; every batch size must give the same verdict and the same first mismatch
  it("a tiny budget (one image per batch, one table pass each) finds the same flipped word as one batch", () => {
    const { dir, m, plan, words, counter } = channelMajorBuild();
    const one = verifyDevices(dir, m, plan.devices, words);
    expect(counter.passes).toBe(1);
    expect(one.checks.every((c) => c.ok)).toBe(true);
    counter.passes = 0;
    const tiny = verifyDevices(dir, m, plan.devices, words, 1);
    // 2 devices × 3 formats, one image per batch
    expect(counter.passes).toBe(6);
    expect(tiny.checks).toEqual(one.checks);
    // device 1, channel-major: address 2·10 + 1 = 21 is block 1 (beam 1), channel 2 = element 6 (default order)
    const p = join(dir, "devices/dev-1.hex");
    const lines = readFileSync(p, "latin1").split("\n");
    const rec = Buffer.from(lines[2]!.slice(1), "hex"); // bytes 32–47 = addresses 16–23
    rec[4 + 10] = rec[4 + 10]! ^ 0x02; // byte 42 = address 21, low byte
    rec[rec.length - 1] = (256 - (rec.subarray(0, rec.length - 1).reduce((x, y) => x + y, 0) % 256)) % 256;
    lines[2] = ":" + rec.toString("hex").toUpperCase();
    writeFileSync(p, lines.join("\n"), "latin1");
    for (const budget of [1, 5, undefined]) {
      const r = verifyDevices(dir, m, plan.devices, words, budget);
      expect(r.first).toMatchObject({ file: "devices/dev-1.hex", device: 1, address: 21, beam: 1, channel: 2, element: 6 });
      expect(r.checks.find((c) => c.check === "devices: dev-*.hex = recomputed")!.ok).toBe(false);
      expect(r.checks.find((c) => c.check === "devices: dev-*.bin = recomputed")!.ok).toBe(true);
    }
    // images streamed in windows of a few addresses (as a 4 GiB image is): the same verdicts, the same first mismatch
    const whole = verifyDevices(dir, m, plan.devices, words);
    for (const [budget, win] of [[1, 1], [4, 2], [10, 5], [1000, 7], [1000, 21], [1000, 22]] as const) {
      counter.passes = 0;
      const r = verifyDevices(dir, m, plan.devices, words, budget, win);
      expect(r.first).toEqual(whole.first);
      expect(r.checks).toEqual(whole.checks);
      expect(counter.passes).toBeGreaterThan(0);
    }
  });

  it("streamed windows: a file one word short, one word long, or with a record after the end record is named as before", () => {
    const { dir, m, plan, words } = channelMajorBuild();
    const bin = join(dir, "devices/dev-0.bin");
    const orig = readFileSync(bin);
    const n = orig.length / 2; // the image's words
    const check = (win: number) => verifyDevices(dir, m, plan.devices, words, 1000, win);
    writeFileSync(bin, orig.subarray(0, orig.length - 2));
    for (const win of [4, 13, 26, 27, 4096]) expect(check(win).first).toMatchObject({ file: "devices/dev-0.bin", address: n - 1, found: -1 });
    writeFileSync(bin, Buffer.concat([orig, Buffer.from([1, 0])]));
    for (const win of [4, 13, 27, 4096]) expect(check(win).first).toMatchObject({ file: "devices/dev-0.bin", address: n, expected: -1, found: 1 });
    writeFileSync(bin, orig);
    const hex = join(dir, "devices/dev-1.hex");
    writeFileSync(hex, readFileSync(hex, "latin1") + ":00000001FF\n", "latin1");
    for (const win of [4, 4096]) expect(check(win).checks.find((c) => c.check === "devices: dev-*.hex readable")!.detail).toMatch(/devices\/dev-1\.hex: line \d+: a record after the end-of-file record/);
  });

  it("an image whose words are right but whose bytes are not as recorded, a missing image and a linked image", () => {
    const t = tempDir();
    const s = writeScenario(baseScenario({ devices: { channels: 4 } }), {}, join(t, "s"));
    const dir = join(t, "b");
    expect(cli(["build", s, "-o", dir, "--no-analysis"]).code).toBe(0);
    expect(cli(["verify", dir]).code).toBe(0);
    const mem = join(dir, "devices/dev-1.mem");
    const orig = readFileSync(mem);
    // a comment decodes to the same words ($readmemh ignores it), but the file is not the one built
    writeFileSync(mem, Buffer.concat([orig, Buffer.from("// edited\n")]));
    let r = cli(["verify", dir]);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/ok {4}devices: dev-\*\.mem = recomputed/);
    expect(r.stdout).toMatch(/FAIL {2}devices: files = manifest: devices\/dev-1\.mem: the manifest records \d+ bytes/);
    expect(r.stdout).toMatch(/FAIL {2}manifest\.json/);
    rmSync(mem);
    r = cli(["verify", dir]);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/FAIL {2}devices: dev-\*\.mem readable: devices\/dev-1\.mem: missing/);
    // a link in place of an image: refused like any link in a build folder (exit 2)
    writeFileSync(join(t, "elsewhere.mem"), orig);
    symlinkSync(join(t, "elsewhere.mem"), mem);
    r = cli(["verify", dir]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/devices\/dev-1\.mem: is a symbolic link/);
  });
});
