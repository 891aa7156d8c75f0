/**
 * verify and report on hostile build folders (issue 9, items 3, 7, 8, 11): every fact a
 * file states is recomputed from the recorded inputs, so edits are caught even when
 * every hash, size and CRC in the folder has been recomputed to match; a crafted
 * folder cannot lead verify or report out of it; malformed input is exit 2, a mismatch
 * exit 1, never exit 3. Small scenarios only (derived: each case is a hand edit of a
 * real build; the expected value is what the unedited build holds).
 */
import { createHash } from "node:crypto";
import { cpSync, existsSync, mkdirSync, readFileSync, readdirSync, rmSync, symlinkSync, writeFileSync } from "node:fs";
import { execFileSync, spawnSync } from "node:child_process";
import { join } from "node:path";
import { crc32 } from "node:zlib";
import { describe, expect, it } from "vitest";
import { BIN, baseScenario, cli, tempDir, writeScenario } from "../helpers.js";
import { writeReport } from "../../src/report/page.js";

const CAL = "# date: 2026-11-20 (invented)\n# source: test range\nelement,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 8 }, (_, i) => `${i},${(i * 37.3) % 360},${((i % 3) * 0.4).toFixed(1)}`).join("\n") + "\n";

const root = tempDir("steercode-hostile-");
const scenario = writeScenario(baseScenario({ calibration: "cal.csv", frequency: ["10 GHz", "10.5 GHz"] }), { "cal.csv": CAL }, join(root, "s"));
const base = join(root, "base");
let built = false;
function copy(name: string): string {
  if (!built) {
    const r = cli(["build", scenario, "-o", base, "--jobs", "1"]);
    if (r.code !== 0) throw new Error(r.stderr);
    built = true;
  }
  const d = join(root, name);
  cpSync(base, d, { recursive: true });
  return d;
}

const sha = (b: Buffer) => createHash("sha256").update(b).digest("hex");
const hex8 = (x: number) => "0x" + (x >>> 0).toString(16).toUpperCase().padStart(8, "0");

/** Recompute every size, SHA-256 and CRC the folder states (manifest and table.h), as a careful forger would. */
function rehash(dir: string, edit: (m: any) => void = () => {}): void {
  const mp = join(dir, "manifest.json");
  const m = JSON.parse(readFileSync(mp, "utf8"));
  edit(m);
  if (existsSync(join(dir, "table.bin"))) {
    const crc = hex8(crc32(readFileSync(join(dir, "table.bin"))));
    const h = join(dir, "table.h");
    writeFileSync(h, readFileSync(h, "utf8").replace(/#define STEERCODE_TABLE_CRC32 0x[0-9A-F]{8}u/, `#define STEERCODE_TABLE_CRC32 ${crc}u`));
    if (m.files["table.bin"]) m.files["table.bin"].crc32 = crc;
  }
  for (const name of Object.keys(m.files)) {
    const p = join(dir, name);
    if (!existsSync(p)) continue;
    const b = readFileSync(p);
    m.files[name].bytes = b.length;
    m.files[name].sha256 = sha(b);
  }
  writeFileSync(mp, JSON.stringify(m, null, 2) + "\n");
}

function verify(dir: string): { code: number; doc: any; stderr: string } {
  const r = cli(["verify", dir, "--json", "--jobs", "1"]);
  expect(r.stderr).not.toMatch(/internal error/);
  expect(r.code).not.toBe(3);
  return { code: r.code, doc: r.code === 2 ? null : JSON.parse(r.stdout), stderr: r.stderr };
}

function failing(doc: any): string[] {
  return doc.checks.filter((c: { ok: boolean }) => !c.ok).map((c: { check: string }) => c.check);
}

/** Replace one cell of line `line` (1-based) of a CSV. */
function editCell(path: string, line: number, col: number, value: string): string {
  const lines = readFileSync(path, "utf8").split("\n");
  const cells = lines[line - 1]!.split(",");
  const old = cells[col]!;
  cells[col] = value;
  lines[line - 1] = cells.join(",");
  writeFileSync(path, lines.join("\n"));
  return old;
}

describe("verify recomputes every fact, also when the hashes were forged to match", () => {
  it("an untouched build verifies (with its analysis rerun), and so does a rehash that changes nothing", () => {
    const d = copy("clean");
    const r = verify(d);
    expect(r.code).toBe(0);
    expect(r.doc.checks.map((c: { check: string }) => c.check)).toEqual(expect.arrayContaining(["codes.csv", "table.bin", "table.h", "table.mem", "table.json", "beams.csv", "manifest.json"]));
    rehash(d);
    expect(readFileSync(join(d, "manifest.json"))).toEqual(readFileSync(join(base, "manifest.json")));
    expect(verify(d).code).toBe(0);
  });

  const manifestEdits: [string, (m: any) => void, RegExp][] = [
    ["a frequency", (m) => (m.frequenciesHz[1] = "10500000001"), /^\/frequenciesHz\/1$/],
    ["an element id", (m) => (m.elementIds[2] = 99), /^\/elementIds\/2$/],
    ["a count", (m) => (m.counts.beams = 4), /^\/counts\/beams$/],
    ["the enabled count", (m) => (m.counts.enabledElements = 7), /^\/counts\/enabledElements$/],
    ["a calibration comment", (m) => (m.calibration.comments[0] = "# date: 2026-12-01 (invented)"), /^\/calibration\/comments\/0$/],
    ["G_ref", (m) => (m.perFrequency[0].gRefDb += 0.5), /^\/perFrequency\/0\/gRefDb$/],
    ["the off word", (m) => (m.layout.off = 1), /^\/layout\/off$/],
    ["a file dropped from the list", (m) => delete m.files["table.mem"], /^\/files\/table\.mem$/],
    ["the analysis summary", (m) => (m.extra.summary.psl_db.max -= 1), /^\/extra\/summary\/psl_db\/max$/],
  ];
  for (const [what, edit, pointer] of manifestEdits) {
    it(`manifest: ${what} edited → exit 1 at its JSON pointer`, () => {
      const d = copy(`m-${what.replace(/\W/g, "")}`);
      rehash(d, edit);
      const r = verify(d);
      expect(r.code).toBe(1);
      expect(failing(r.doc)).toEqual(["manifest.json"]);
      expect(r.doc.firstMismatch.file).toBe("manifest.json");
      expect(r.doc.firstMismatch.pointer).toMatch(pointer);
    });
  }

  const headerEdits: [string, RegExp, string][] = [
    ["a field shift", /#define STEERCODE_FIELD_PHASE_SHIFT 0u/, "#define STEERCODE_FIELD_PHASE_SHIFT 1u"],
    ["the off word", /#define STEERCODE_OFF_WORD 0x0000u/, "#define STEERCODE_OFF_WORD 0x0001u"],
    ["the beam count", /#define STEERCODE_BEAMS 3u/, "#define STEERCODE_BEAMS 4u"],
    ["the element count", /#define STEERCODE_ELEMENTS 8u/, "#define STEERCODE_ELEMENTS 9u"],
  ];
  for (const [what, from, to] of headerEdits) {
    it(`table.h: ${what} changed → exit 1, the line named`, () => {
      const d = copy(`h-${what.replace(/\W/g, "")}`);
      const p = join(d, "table.h");
      const text = readFileSync(p, "utf8");
      expect(text).toMatch(from);
      writeFileSync(p, text.replace(from, to));
      rehash(d);
      const r = verify(d);
      expect(r.code).toBe(1);
      // the forged hashes in the manifest are not those of the right files: it fails too
      expect(failing(r.doc)).toEqual(["table.h", "manifest.json"]);
      const line = text.split("\n").findIndex((l) => from.test(l)) + 1;
      expect(r.doc.firstMismatch).toMatchObject({ file: "table.h", line, found: to });
    });
  }

  it("table.bin: a trailing byte with the CRC (manifest and table.h) updated → exit 1, the length named", () => {
    const d = copy("bin-trailing");
    writeFileSync(join(d, "table.bin"), Buffer.concat([readFileSync(join(d, "table.bin")), Buffer.from([0])]));
    rehash(d);
    const r = verify(d);
    expect(r.code).toBe(1);
    expect(failing(r.doc)).toEqual(["table.bin", "table.h", "manifest.json"]);
    const words = 2 * 3 * 8;
    expect(r.doc.firstMismatch).toMatchObject({ file: "table.bin", byte: words * 2 });
    expect(r.doc.firstMismatch.found).toMatch(/the file is 97 bytes/);
  });

  it("table.bin: one word changed (CRC updated) → exit 1 at its frequency, beam and element, both words shown", () => {
    const d = copy("bin-word");
    const b = readFileSync(join(d, "table.bin"));
    // word 8·3 + 8 + 5 = frequency 1, beam 1, element 5
    const i = (24 + 8 + 5) * 2;
    const old = b.readUInt16LE(i);
    b.writeUInt16LE(old ^ 1, i);
    writeFileSync(join(d, "table.bin"), b);
    rehash(d);
    const r = verify(d);
    expect(r.code).toBe(1);
    expect(r.doc.firstMismatch).toMatchObject({ file: "table.bin", frequency_hz: "10500000000", beam: 1, element: 5, expected: "0x" + old.toString(16).toUpperCase().padStart(4, "0"), found: "0x" + (old ^ 1).toString(16).toUpperCase().padStart(4, "0") });
  });

  // codes.csv line 2 + 24 + 8 + 5 = frequency 1, beam 1, element 5
  const csvEdits: [string, number, (old: string) => string][] = [
    ["frequency_hz", 0, () => "10500000001"],
    ["beam", 1, () => "2"],
    ["element", 2, () => "6"],
    ["phase_code out of range", 3, () => "9"],
    ["atten_code", 4, (o) => String(Number(o) + 1)],
    ["word not an integer", 5, (o) => `${o}.5`],
    ["phase_deg", 6, (o) => (Number(o) + 0.000001).toFixed(6)],
    ["atten_db", 7, (o) => (Number(o) + 1).toFixed(6)],
  ];
  for (const [what, col, value] of csvEdits) {
    it(`codes.csv: ${what} edited → exit 1 at that line, beam and element`, () => {
      const d = copy(`csv-${what.replace(/\W/g, "")}`);
      const p = join(d, "codes.csv");
      const line = 2 + 24 + 8 + 5;
      const cells = readFileSync(p, "utf8").split("\n")[line - 1]!.split(",");
      editCell(p, line, col, value(cells[col]!));
      rehash(d);
      const r = verify(d);
      expect(r.code).toBe(1);
      expect(failing(r.doc)).toEqual(["codes.csv", "manifest.json"]);
      expect(r.doc.firstMismatch).toMatchObject({ file: "codes.csv", line, frequency_hz: "10500000000", beam: 1, element: 5 });
    });
  }

  it("table.json: invalid JSON (truncated, hash updated) → exit 1 with the place, not a crash", () => {
    const d = copy("json-bad");
    const p = join(d, "table.json");
    const b = readFileSync(p);
    writeFileSync(p, b.subarray(0, b.length - 20));
    rehash(d);
    const r = verify(d);
    expect(r.code).toBe(1);
    expect(failing(r.doc)).toEqual(["table.json", "manifest.json"]);
    expect(r.doc.firstMismatch.found).toBe("(end of file)");
  });

  it("table.json and table.mem: a changed word is located at its frequency, beam and element", () => {
    const d = copy("json-word");
    const p = join(d, "table.json");
    const text = readFileSync(p, "utf8");
    // the beam arrays are the lines after "words":[ ; frequency 1, beam 2 is the 6th, element 3 its 4th word
    const lines = text.split("\n");
    const first = lines.findIndex((l) => l.endsWith('"words":[')) + 1;
    const beamLines = lines.map((l, i) => [l, i] as const).filter(([l, i]) => i >= first && /^\[\d/.test(l));
    const [l, i] = beamLines[5]!;
    const w = l.slice(1).replace(/\].*$/, "").split(",");
    w[3] = String(Number(w[3]) + 1);
    lines[i] = "[" + w.join(",") + l.slice(l.indexOf("]") === -1 ? l.length : l.indexOf("]"));
    writeFileSync(p, lines.join("\n"));
    const mem = join(d, "table.mem");
    const ml = readFileSync(mem, "utf8").split("\n");
    ml[2 + 8 * 3 + 7] = "FFFF"; // frequency 1, beam 0, element 7
    writeFileSync(mem, ml.join("\n"));
    rehash(d);
    const r = verify(d);
    expect(r.code).toBe(1);
    expect(failing(r.doc).sort()).toEqual(["manifest.json", "table.json", "table.mem"]);
    expect(r.doc.checks.find((c: { check: string }) => c.check === "table.json").detail).toMatch(/frequency 10500000000 Hz, beam 2, element 3/);
    expect(r.doc.firstMismatch).toMatchObject({ file: "table.mem", line: 2 + 24 + 7 + 1, beam: 0, element: 7, found: "FFFF" });
  });

  it("an edited input copy with its hash updated: every table differs from the recomputation (beams.csv need not: the codes compensate the calibration)", () => {
    const d = copy("input-edit");
    const p = join(d, "inputs", "calibration.csv");
    writeFileSync(p, readFileSync(p, "utf8").replace(/^3,([-\d.]+),/m, (_, ph) => `3,${Number(ph) + 90},`));
    rehash(d);
    const r = verify(d);
    expect(r.code).toBe(1);
    expect(failing(r.doc), JSON.stringify(r.doc.checks)).toEqual(expect.arrayContaining(["codes.csv", "table.bin", "table.h", "table.mem", "table.json", "manifest.json"]));
    expect(r.doc.firstMismatch).toMatchObject({ file: "codes.csv", element: 3 });
  });

  it("an optimized build (codes chosen by search, in the analysis threads) is regenerated and verified; an edited word is caught", () => {
    const s = writeScenario(baseScenario({ quantizer: { method: "optimized" }, array: { lattice: { kind: "rectangular", columns: 8, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } } }), {}, join(root, "opt"));
    const out = join(root, "opt-build");
    expect(cli(["build", s, "-o", out, "--jobs", "2"]).code).toBe(0);
    expect(verify(out).code).toBe(0);
    const mem = join(out, "table.mem");
    const ml = readFileSync(mem, "utf8").split("\n");
    ml[2 + 16 + 3] = ml[2 + 16 + 3] === "0000" ? "0001" : "0000"; // beam 1, element 3
    writeFileSync(mem, ml.join("\n"));
    const r = verify(out);
    expect(r.code).toBe(1);
    expect(r.doc.firstMismatch).toMatchObject({ file: "table.mem", beam: 1, element: 3 });
  });

  it("a missing table file → exit 1 'missing'; an extra file is named and left alone", () => {
    const d = copy("missing");
    rmSync(join(d, "table.mem"));
    writeFileSync(join(d, "notes.txt"), "x");
    const r = verify(d);
    expect(r.code).toBe(1);
    expect(r.doc.checks.find((c: { check: string }) => c.check === "table.mem").detail).toMatch(/^missing/);
    expect(r.doc.checks.find((c: { check: string }) => c.check === "files not in the manifest").detail).toMatch(/notes\.txt/);
  });
});

describe("crafted folders: verify and report stay inside the folder; exit 2, never 3", () => {
  const bad = (dir: string, re: RegExp) => {
    for (const args of [["verify", dir, "--jobs", "1"], ["report", dir, "-o", join(root, "r.html")]]) {
      const r = cli(args);
      expect(r.code, `${args[0]}: ${r.stderr}`).toBe(2);
      expect(r.stderr).toMatch(re);
      expect(r.stderr).not.toMatch(/internal error|\n\s+at /);
    }
    expect(existsSync(join(root, "r.html"))).toBe(false);
  };

  it("a manifest input path out of the folder (../../proc/self/environ) is refused at its pointer", () => {
    const d = copy("x-environ");
    rehash(d, (m) => (m.inputs[0].copy = "../../proc/self/environ"));
    bad(d, /manifest\.json: \/inputs\/0\/copy: expected "inputs\/calibration\.csv"/);
  });

  it("a manifest file name that is an absolute path (/dev/zero) is refused", () => {
    const d = copy("x-devzero");
    rehash(d, (m) => (m.files["/dev/zero"] = { bytes: 1, sha256: "0".repeat(64) }));
    bad(d, /\/files\/~1dev~1zero: expected a name inside the folder/);
  });

  it("table.bin a link to /dev/zero, inputs/ a link to another folder: refused, not followed", () => {
    const d = copy("x-link");
    rmSync(join(d, "table.bin"));
    symlinkSync("/dev/zero", join(d, "table.bin"));
    const r = cli(["verify", d]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/table\.bin: is a symbolic link/);
    const e = copy("x-inputs-link");
    const elsewhere = join(root, "elsewhere");
    cpSync(join(e, "inputs"), elsewhere, { recursive: true });
    rmSync(join(e, "inputs"), { recursive: true });
    symlinkSync(elsewhere, join(e, "inputs"));
    bad(e, /inputs: is a symbolic link/);
  });

  it("a FIFO in place of table.mem is refused at once (no hang)", () => {
    const d = copy("x-fifo");
    rmSync(join(d, "table.mem"));
    execFileSync("mkfifo", [join(d, "table.mem")]);
    const r = cli(["verify", d], { timeout: 20_000 });
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/table\.mem: is not a regular file/);
  });

  it("a symbolic link loop: as the folder and as a file inside it", () => {
    const loop = join(root, "loop");
    symlinkSync(loop, loop);
    const r = cli(["verify", loop]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/loop: is a symbolic link loop/);
    const d = copy("x-loop");
    rmSync(join(d, "table.json"));
    symlinkSync(join(d, "table.json"), join(d, "table.json"));
    const v = cli(["verify", d]);
    expect(v.code).toBe(2);
    expect(v.stderr).toMatch(/table\.json: is a symbolic link/);
  });

  const malformed: [string, string, RegExp][] = [
    ["not JSON", "{ nope", /manifest\.json: not valid JSON/],
    ["not an object", "[1,2]", /manifest\.json: \/: expected a JSON object/],
    ["inputs not a list", JSON.stringify({ format: "steercode-manifest/1", tool: { version: "0" }, scenario: { source: "s.json" }, analysis: false, inputs: "x", files: {} }), /\/inputs: expected a list/],
    ["an unknown input role", JSON.stringify({ format: "steercode-manifest/1", tool: { version: "0" }, scenario: { source: "s.json" }, analysis: false, inputs: [{ role: "passwd", ref: "a", copy: "/etc/passwd" }], files: {} }), /\/inputs\/0\/role: expected one of/],
    ["a file entry without a hash", JSON.stringify({ format: "steercode-manifest/1", tool: { version: "0" }, scenario: { source: "s.json" }, analysis: false, inputs: [], files: { "table.bin": { bytes: -1 } } }), /\/files\/table\.bin: expected \{ bytes/],
  ];
  for (const [what, text, re] of malformed) {
    it(`a malformed manifest (${what}) → exit 2, located`, () => {
      const d = join(root, `mal-${what.replace(/\W/g, "")}`);
      mkdirSync(d);
      writeFileSync(join(d, "manifest.json"), text);
      bad(d, re);
    });
  }

  it('"outputs": [] builds a folder without tables that verify checks and passes (manifest, inputs, analysis)', () => {
    const s = writeScenario(baseScenario({ outputs: [] }), {}, join(root, "no-out"));
    const out = join(root, "no-out-build");
    expect(cli(["build", s, "-o", out]).code).toBe(0);
    expect(readdirSync(out).sort()).toEqual(["beams.csv", "inputs", "manifest.json"]);
    const r = verify(out);
    expect(r.code).toBe(0);
    expect(r.doc.checks.find((c: { check: string }) => c.check === "tables").detail).toMatch(/lists no outputs/);
  });
});

describe("diff and report on a damaged table.bin say so (they trusted the rest of the folder)", () => {
  // report: a truncated table.bin gave the badge "no table.bin CRC in this folder to check them against", exit 0 without a word;
  // diff: a missing table.bin fell back to codes.csv and printed "identical"
  it("report: a truncated or missing table.bin → a warning on stderr and a ✗ on the page; diff: a missing table.bin → exit 2", () => {
    const cut = copy("cut-bin");
    const bin = readFileSync(join(cut, "table.bin"));
    expect(bin.length).toBe(96); // derived: 2 frequencies × 3 beams = 6 beams of 8 elements × 2 bytes
    writeFileSync(join(cut, "table.bin"), bin.subarray(0, 50));
    const r = cli(["report", cut, "-o", join(cut, "r.html"), "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const want = "table.bin holds 50 bytes, the manifest's counts give 96 (6 beams × 16 bytes); the codes cannot be checked against it: run steercode verify on this folder";
    expect(JSON.parse(r.stdout).warnings).toEqual([want]);
    const page = readFileSync(join(cut, "r.html"), "utf8");
    expect(page.includes(`"crcProblem":${JSON.stringify(want)}`), "the page's data carries the problem for the badge").toBe(true);
    expect(page.includes("— ✗ table.bin holds 50 bytes"), "the summary names it").toBe(true);
    const gone = copy("no-bin");
    rmSync(join(gone, "table.bin"));
    const p = cli(["report", gone, "-o", join(gone, "r.html")]);
    expect(p.code, p.stderr).toBe(0);
    expect(p.stderr).toMatch(/warning: table\.bin is listed in manifest\.json but missing/);
    const d = cli(["diff", base, gone]);
    expect(d.code).toBe(2);
    expect(d.stderr).toMatch(/no-bin\/table\.bin: is listed in manifest\.json but missing; run steercode verify on this folder/);
  });
});

describe("diff and build --compare on a damaged or crafted folder: exit 2 naming the file and pointer, never 3, never a silent result", () => {
  // diff reads the table by manifest.json's counts and layout and trusted them: 0 or 7 bytes a word and 2^40 elements
  // were internal errors (exit 3), a shortened elementIds list or a table.bin with a byte appended compared as if
  // whole (exit 0); a garbled table.mem token or codes.csv cell was read as word 0 (exit 0), a ragged codes.csv row
  // was exit 3, a table.h word past 32 bits kept its low 32 bits (0x100000000 compared as 0x0000, exit 0)
  const onlyFormat = (d: string, keep: string) => {
    const mp = join(d, "manifest.json");
    const m = JSON.parse(readFileSync(mp, "utf8"));
    for (const f of ["table.bin", "table.json", "table.mem", "table.h", "codes.csv"])
      if (f !== keep) {
        rmSync(join(d, f));
        delete m.files[f];
      }
    writeFileSync(mp, JSON.stringify(m));
  };
  const editManifest = (d: string, edit: (m: any) => void) => {
    const m = JSON.parse(readFileSync(join(d, "manifest.json"), "utf8"));
    edit(m);
    writeFileSync(join(d, "manifest.json"), JSON.stringify(m));
  };
  const cases: [string, (d: string) => void, RegExp][] = [
    ["layout bytes 0", (d) => editManifest(d, (m) => (m.layout.bytes = 0)), /manifest\.json: \/layout\/bytes: expected 2 \(a 16-bit word\), got 0/],
    ["layout bytes 7", (d) => editManifest(d, (m) => (m.layout.bytes = 7)), /manifest\.json: \/layout\/bytes: expected 2 \(a 16-bit word\), got 7/],
    ["2^40 elements", (d) => editManifest(d, (m) => (m.counts.elements = 2 ** 40)), /manifest\.json: \/counts\/elements: expected the number of ids listed in \/elementIds \(8, at least 1\), got 1099511627776/],
    ["elementIds shortened", (d) => editManifest(d, (m) => (m.elementIds = [0])), /manifest\.json: \/counts\/elements: expected the number of ids listed in \/elementIds \(1, at least 1\), got 8/],
    ["a word count that is not frequencies × beams × elements", (d) => editManifest(d, (m) => (m.counts.words = 47)), /manifest\.json: \/counts\/words: expected frequencies × beams × elements = 48, got 47/],
    ["table.bin with a byte appended", (d) => writeFileSync(join(d, "table.bin"), Buffer.concat([readFileSync(join(d, "table.bin")), Buffer.from([0])])), /table\.bin: holds 97 bytes, not a whole number of 2-byte words/],
    ["table.mem with a token that is not hex", (d) => { onlyFormat(d, "table.mem"); const p = join(d, "table.mem"); const l = readFileSync(p, "utf8").split("\n"); const k = l.findIndex((x) => /^[0-9a-f]+$/i.test(x.trim())); l[k] = "zzzz"; writeFileSync(p, l.join("\n")); }, /table\.mem, line \d+: expected a word in hex digits, got "zzzz"/],
    ["codes.csv with a ragged row", (d) => { onlyFormat(d, "codes.csv"); const p = join(d, "codes.csv"); const l = readFileSync(p, "utf8").split("\n"); l[4] = "10000000000,0,3,x,y,zz"; writeFileSync(p, l.join("\n")); }, /codes\.csv, line 5: not valid CSV/],
    ["codes.csv with a word that is not a number", (d) => { onlyFormat(d, "codes.csv"); const p = join(d, "codes.csv"); const l = readFileSync(p, "utf8").split("\n"); const c = l[4]!.split(","); c[5] = "x"; l[4] = c.join(","); writeFileSync(p, l.join("\n")); }, /codes\.csv, line 5, column word: expected a whole number, got "x"/],
    ["table.h with a word past 32 bits", (d) => { onlyFormat(d, "table.h"); const p = join(d, "table.h"); writeFileSync(p, readFileSync(p, "utf8").replace(/(\/\* beam 0 \*\/\s*)0x[0-9A-F]+/, "$10x100000000")); }, /table\.h: expected 32-bit words in the table's initialiser, got 0x100000000/],
    ["table.h with a word wider than the layout", (d) => { onlyFormat(d, "table.h"); const p = join(d, "table.h"); writeFileSync(p, readFileSync(p, "utf8").replace(/(\/\* beam 0 \*\/\s*)0x[0-9A-F]+/, "$10x1FFFF")); }, /table\.h: word 0 \(0-based\) is 0x1FFFF, wider than the manifest's 16-bit word/],
  ];
  for (const [what, edit, re] of cases)
    it(`${what}: diff exit 2, build --compare exit 2, nothing written`, () => {
      const d = copy(`diff-bad-${what.replace(/\W/g, "")}`);
      edit(d);
      const out = join(root, `diff-bad-out-${what.replace(/\W/g, "")}`);
      for (const args of [["diff", base, d, "-o", out], ["diff", d, base, "-o", out], ["build", scenario, "-o", out, "--compare", d, "--no-analysis"]]) {
        const r = cli(args);
        expect(r.code, `${args.join(" ")}: ${r.stderr}`).toBe(2);
        // build --compare first checks that the scenario's table can be compared with the earlier one's
        expect(r.stderr).toMatch(args[0] === "build" ? new RegExp(`${re.source}|--compare: these builds cannot be compared word by word`) : re);
        expect(r.stderr).not.toMatch(/internal error|\n\s+at .+:\d+:\d+/);
        expect(existsSync(out)).toBe(false);
      }
    });
});

describe("diff on a crafted devices section: only devices/map.csv is read, as every folder file is", () => {
  // the manifest's devices.map was joined to the folder and read with readFileSync: "../../../../dev/zero" (or
  // devices/map.csv a link to it) was read for ever, growing past 7 GB, deaf to SIGTERM; "../../etc/passwd" was
  // parsed (exit 3: Invalid Record Length), and so was a map.csv with an unclosed quote; a devices section that was
  // not an object, or without "map", was exit 3 too
  const droot = tempDir("steercode-devhostile-");
  const dscenario = writeScenario(baseScenario({ devices: { channels: 4 } }), {}, join(droot, "s"));
  const dbase = join(droot, "base");
  let dbuilt = false;
  const dcopy = (name: string) => {
    if (!dbuilt) {
      const r = cli(["build", dscenario, "-o", dbase, "--no-analysis"]);
      if (r.code !== 0) throw new Error(r.stderr);
      dbuilt = true;
    }
    const d = join(droot, name);
    cpSync(dbase, d, { recursive: true });
    return d;
  };
  const man = (d: string, edit: (m: any) => void) => {
    const m = JSON.parse(readFileSync(join(d, "manifest.json"), "utf8"));
    edit(m);
    writeFileSync(join(d, "manifest.json"), JSON.stringify(m));
  };
  const cases: [string, (d: string) => void, RegExp][] = [
    ["map naming /dev/zero through ../", (d) => man(d, (m) => (m.devices.map = "../".repeat(12) + "dev/zero")), /manifest\.json: \/devices\/map: expected "devices\/map\.csv", got "(\.\.\/)+dev\/zero"/],
    ["map.csv a link to /dev/zero", (d) => { rmSync(join(d, "devices", "map.csv")); symlinkSync("/dev/zero", join(d, "devices", "map.csv")); }, /devices\/map\.csv: is a symbolic link; a build folder holds regular files only/],
    ["map.csv with an unclosed quote", (d) => writeFileSync(join(d, "devices", "map.csv"), readFileSync(join(d, "devices", "map.csv"), "utf8") + '"1,2\n'), /devices\/map\.csv, line 10: not valid CSV \(Quote Not Closed/],
    ["a devices section that is a number", (d) => man(d, (m) => (m.devices = 5)), /manifest\.json: \/devices: expected an object/],
    ["a devices section without map", (d) => man(d, (m) => delete m.devices.map), /manifest\.json: \/devices\/map: expected "devices\/map\.csv", got undefined/],
    ["channels that are not a number", (d) => man(d, (m) => (m.devices.channels = "x")), /manifest\.json: \/devices\/channels: expected the channels of a device/],
  ];
  for (const [what, edit, re] of cases)
    it(`${what}: exit 2 at once`, () => {
      const d = dcopy(`dev-${what.replace(/\W/g, "")}`);
      edit(d);
      // SIGKILL: the old diff ignored SIGTERM while it read /dev/zero
      const r = spawnSync(process.execPath, [BIN, "diff", dbase, d], { encoding: "utf8", timeout: 30_000, killSignal: "SIGKILL", env: { ...process.env, NO_COLOR: "1" } });
      expect(r.status, r.stderr).toBe(2);
      expect(r.stderr).toMatch(re);
      expect(r.stderr).not.toMatch(/internal error|\n\s+at .+:\d+:\d+/);
    });
});

describe("report draws its metrics only from the beams.csv the build wrote", () => {
  // a PSL edited in beams.csv after the build (verify: FAIL) was drawn on the page as the build's, exit 0
  it("a beams.csv that differs from manifest.json's size or SHA-256 → exit 2 naming the file, no page", () => {
    // psl_db (column 11) of the first row: a digit changed (the size still matches), and the cell emptied (shorter)
    const editPsl = (t: string, f: (cell: string) => string) => {
      const lines = t.split("\n");
      const cells = lines[1]!.split(",");
      cells[10] = f(cells[10]!);
      lines[1] = cells.join(",");
      return lines.join("\n");
    };
    for (const [name, edit] of [
      ["same-size", (t: string) => editPsl(t, (c) => c.replace(/\d(?=\D*$)/, (d) => (d === "9" ? "8" : "9")))],
      ["emptied", (t: string) => editPsl(t, () => "")],
    ] as const) {
      const dir = copy(name);
      const before = readFileSync(join(dir, "beams.csv"), "utf8");
      const after = edit(before);
      expect(after, name).not.toBe(before);
      writeFileSync(join(dir, "beams.csv"), after);
      const r = cli(["report", dir, "-o", join(dir, "r.html")]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(/beams\.csv: differs from what manifest\.json records for it \(\d+ bytes, SHA-256 [0-9a-f]{16}…; the file has \d+ bytes, SHA-256 [0-9a-f]{16}…\): changed after the build; run steercode verify on this folder/);
      expect(existsSync(join(dir, "r.html")), name).toBe(false);
    }
  });
});

describe("report: a page a browser can open", () => {
  // 64 frequencies × 1 M beams made a 396 MB page (151 s, 2 GB of memory), exit 0
  it("a build of more than 1 048 576 beams (frequencies × beams) → exit 2 before any work", () => {
    // derived: 3 frequencies × 601 × 601 beams = 1 083 603 > 1 048 576
    const s = writeScenario(baseScenario({ frequency: ["10 GHz", "10.1 GHz", "10.2 GHz"], beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.002 }, v: { from: -0.6, to: 0.6, step: 0.002 } }, outputs: ["bin"] }), {}, join(root, "big-s"));
    const out = join(root, "big");
    expect(cli(["build", s, "-o", out, "--no-analysis"]).code).toBe(0);
    const r = cli(["report", out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/inputs\/scenario\.json: \/beams: the report would carry 3 frequencies × 361201 beams = 1083603 beams; expected at most 1048576/);
    expect(existsSync(join(out, "report.html"))).toBe(false);
  });
});

describe("report: nothing from the folder reaches the page unescaped", () => {
  it("a sweep folder with markup in sweep.json and sweep.svg: escaped text, the figure drawn from the numbers", () => {
    const s = writeScenario(baseScenario(), {}, join(root, "sw"));
    const sw = join(root, "sweep");
    expect(cli(["sweep", s, "--phase-bits", "3..4", "-o", sw, "--jobs", "1"]).code).toBe(0);
    const p = join(sw, "sweep.json");
    const doc = JSON.parse(readFileSync(p, "utf8"));
    doc.name = '<script>alert("name")</script>';
    doc.rows[0].quantizer = '<img src=x onerror="alert(1)">';
    doc.rows[1].psl_db_max = "<b>not a number</b>";
    writeFileSync(p, JSON.stringify(doc));
    writeFileSync(join(sw, "sweep.svg"), '<svg xmlns="http://www.w3.org/2000/svg"><script>alert("svg")</script><foreignObject/></svg>');
    const out = join(root, "sweep-report.html");
    const r = cli(["report", sw, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    const html = readFileSync(out, "utf8");
    expect(html).not.toMatch(/<script|<img|<foreignObject|<b>/i);
    expect(html).not.toMatch(/alert\("svg"\)/);
    expect(html).toContain("&lt;script&gt;alert");
    expect(html).toContain("&lt;img src=x onerror=&quot;alert(1)&quot;&gt;");
    // the figure is still there, drawn from the rows
    expect(html).toMatch(/id="sweep"[\s\S]*<svg[\s\S]*Worst sidelobe level/);
  });

  it("a failed write (ENOSPC) removes the temporary file, keeps the previous report, and is exit-2 material", () => {
    const d = tempDir();
    const target = join(d, "report.html");
    writeFileSync(target, "previous");
    const full = (file: string, data: string) => {
      writeFileSync(file, data.slice(0, 10)); // part of it reached the disk
      throw Object.assign(new Error("ENOSPC: no space left on device, write"), { code: "ENOSPC" });
    };
    expect(() => writeReport(target, "<html>new</html>".repeat(100), full)).toThrow(/report\.html: cannot write the report: no space left on the device \(ENOSPC\)/);
    expect(readdirSync(d)).toEqual(["report.html"]);
    expect(readFileSync(target, "utf8")).toBe("previous");
  });
});

// report drew its page from the recorded inputs and took a manifest that disagreed with them
// (7 beams where the inputs give 3, another layout, a forged calibration hash, an edited
// calibration copy with the hashes redone): exit 0 and a page. verify finds each (exit 1);
// report now refuses the folder (exit 2) at the manifest's JSON pointer, writing nothing.
describe("report on a folder whose manifest disagrees with its recorded inputs", () => {
  const cases: [string, (d: string) => void, RegExp][] = [
    ["a beam count", (d) => rehash(d, (m) => (m.counts.beams = 7)), /\/counts\/beams: says 7, the recorded inputs .* give 3\b/],
    ["the word layout", (d) => rehash(d, (m) => (m.layout.bits = 12)), /\/layout\/bits: says 12, .* give 16\b/],
    ["an element id", (d) => rehash(d, (m) => (m.elementIds[0] = 999)), /\/elementIds\/0: says 999, .* give 0\b/],
    ["the frequencies", (d) => rehash(d, (m) => (m.frequenciesHz[1] = "11000000000")), /\/frequenciesHz\/1: says "11000000000"/],
    ["G_ref", (d) => rehash(d, (m) => (m.perFrequency[0].gRefDb = -99)), /\/perFrequency\/0\/gRefDb: says -99/],
    // the clip count (the report printed "G_ref …, 999 clipped" with exit 0)
    ["a clip count", (d) => rehash(d, (m) => (m.perFrequency[0].clipped = 999)), /\/perFrequency\/0\/clipped: says 999, .* give 0\b/],
    ["the calibration's hash", (d) => rehash(d, (m) => (m.calibration.sha256 = "0".repeat(64))), /\/calibration\/sha256: says "0{64}"/],
    ["the scenario's hash", (d) => rehash(d, (m) => (m.scenario.sha256 = "0".repeat(64))), /\/scenario\/sha256: says "0{64}"/],
    [
      "the calibration copy, edited, every hash redone but the manifest's calibration record",
      (d) => {
        const p = join(d, "inputs", "calibration.csv");
        writeFileSync(p, readFileSync(p, "utf8").replace("\n3,", "\n3,1"));
        rehash(d);
      },
      /\/calibration\/sha256: says "[0-9a-f]{64}", the recorded inputs .* give "[0-9a-f]{64}"/,
    ],
  ];
  for (const [what, forge, re] of cases)
    it(`${what}: verify exit 1, report exit 2 naming manifest.json and the pointer, nothing written`, () => {
      const d = copy(`disagree-${what.split(" ")[1]}-${what.length}`);
      forge(d);
      const v = cli(["verify", d, "--jobs", "1", "--json"]);
      expect(v.code, v.stderr).toBe(1);
      const out = join(d, "r.html");
      const r = cli(["report", d, "-o", out]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(/manifest\.json: /);
      expect(r.stderr).toMatch(re);
      expect(r.stderr).toMatch(/run steercode verify on it/);
      expect(existsSync(out)).toBe(false);
    });

  // a band section (manifest extra.band) where the scenario has no band: the page printed
  // "Across the band" with its forged squint figures, exit 0
  it("a band section on a build without a band: verify exit 1, report exit 2 at /extra/band/frequenciesHz", () => {
    const d = copy("disagree-band");
    const dist = { median: 5, p95: 6, max: 7, worst: 0 };
    rehash(d, (m) => (m.extra.band = { frequenciesHz: ["27000000000", "29000000000"], worstPointingDeg: dist, worstGainLossDb: dist, perBeam: [{ tableFrequencyHz: 1e10, beam: 0, worstPointingDeg: 7, worstPointingAtHz: 27e9, worstGainLossDb: 7, worstGainLossAtHz: 27e9 }] }));
    expect(cli(["verify", d, "--jobs", "1", "--json"]).code).toBe(1);
    const out = join(d, "r.html");
    const r = cli(["report", d, "-o", out]);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/manifest\.json: \/extra\/band\/frequenciesHz: says \["27000000000","29000000000"\], the recorded inputs .* give \(absent\)/);
    expect(existsSync(out)).toBe(false);
  });

  // a malformed band section was an internal error in the report (exit 3: "b.perBeam.map is not a function")
  for (const [what, band] of [["{}", {}], ["a string", "x"], ["perBeam a number", { frequenciesHz: ["1"], worstPointingDeg: {}, worstGainLossDb: {}, perBeam: 5 }]] as [string, unknown][])
    it(`a band section that is ${what}: exit 2 at /extra/band, nothing written`, () => {
      const d = copy(`bad-band-${what.length}`);
      rehash(d, (m) => (m.extra.band = band));
      const out = join(d, "r.html");
      const r = cli(["report", d, "-o", out]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(/manifest\.json: \/extra\/band: expected the band analysis/);
      expect(existsSync(out)).toBe(false);
    });

  // the report recomputes each frequency's clip count from the recorded inputs; on builds that clip (the build's own
  // count, the engine's maximum over every beam, is the reference) the genuine folder reports and an edited count is refused
  for (const [what, over, files] of [
    ["nominal attenuator", { attenuator: { bits: 1, step: "1 dB" } }, {}],
    ["measured attenuator states", { attenuator: { bits: 1, step: "1 dB", states: "att.csv" } }, { "att.csv": "code,atten_db,phase_deg\n0,0,0\n1,1.2,3\n" }],
  ] as [string, Record<string, unknown>, Record<string, string>][])
    it(`clip counts on a build that clips (${what}): reported as built, an edited one refused`, () => {
      const sc = writeScenario(baseScenario({ calibration: "cal.csv", frequency: ["10 GHz", "10.5 GHz"], taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 }, ...over }), { "cal.csv": CAL, ...files }, join(root, `clip-${what.length}`));
      const d = join(root, `clip-build-${what.length}`);
      expect(cli(["build", sc, "-o", d, "--jobs", "1"]).code).toBe(0);
      const clipped = (JSON.parse(readFileSync(join(d, "manifest.json"), "utf8")) as { perFrequency: { clipped: number }[] }).perFrequency.map((p) => p.clipped);
      expect(Math.min(...clipped)).toBeGreaterThan(0);
      const ok = cli(["report", d, "-o", join(d, "ok.html")]);
      expect(ok.code, ok.stderr).toBe(0);
      expect(readFileSync(join(d, "ok.html"), "utf8")).toContain(`${clipped[1]} clipped`);
      rehash(d, (m) => (m.perFrequency[1].clipped = clipped[1]! + 1));
      const r = cli(["report", d, "-o", join(d, "r.html")]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`/perFrequency/1/clipped: says ${clipped[1]! + 1}, .* give ${clipped[1]}\\b`));
    });

  // the page's "table.bin CRC-32" was the manifest's record, printed as the table's: an edited record (0xDEADBEEF) showed as is
  it("a manifest whose table.bin CRC-32 is not the file's: the page prints the file's CRC (zlib's CRC-32 of its bytes) with a ✗, stderr warns", () => {
    const d = copy("disagree-crc");
    const mp = join(d, "manifest.json");
    const m = JSON.parse(readFileSync(mp, "utf8"));
    const real = hex8(crc32(readFileSync(join(d, "table.bin"))));
    expect(m.files["table.bin"].crc32).toBe(real);
    m.files["table.bin"].crc32 = "0xDEADBEEF";
    writeFileSync(mp, JSON.stringify(m, null, 2));
    const out = join(d, "r.html");
    const r = cli(["report", d, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/manifest\.json records table\.bin's CRC-32 as 0xDEADBEEF, its bytes give 0x[0-9A-F]{8}/);
    const html = readFileSync(out, "utf8");
    expect(html).toContain(`table.bin CRC-32</th><td>${real} — ✗ manifest.json records`);
    expect(html).not.toMatch(/<td>0xDEADBEEF/);
    const j = JSON.parse(cli(["report", d, "-o", out, "--json"]).stdout) as { warnings: string[] };
    expect(j.warnings.join("\n")).toContain(`its bytes give ${real}`);
  });

  // diff.json (build --compare, diff): null was an internal error (exit 3), {} printed "NaN of NaN words changed"
  for (const [what, text, re] of [
    ["null", "null", /diff\.json: \/: expected a JSON object/],
    ["{}", "{}", /diff\.json: \/summary: expected the comparison's summary/],
    ["a summary without counts", JSON.stringify({ identical: false, summary: { wordsChanged: "x" } }), /diff\.json: \/summary\/wordsCompared: expected a number ≥ 0/],
  ] as [string, string, RegExp][])
    it(`a diff.json that is ${what}: exit 2 naming it, nothing written`, () => {
      const d = copy(`bad-diff-${what.length}`);
      writeFileSync(join(d, "diff.json"), text);
      const out = join(d, "r.html");
      const r = cli(["report", d, "-o", out]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(re);
      expect(existsSync(out)).toBe(false);
    });

  // diff and build --compare print the calibration record: a number, or comments missing or not a list, were internal errors
  // (exit 3: "Cannot read properties of undefined (reading 'map')", "c.comments.map is not a function")
  for (const [what, edit] of [
    ["a number", (m: any) => (m.calibration = 1e308)],
    ["without comments", (m: any) => delete m.calibration.comments],
    ["with comments that are a string", (m: any) => (m.calibration.comments = "0".repeat(64))],
  ] as [string, (m: any) => void][])
    it(`a calibration record that is ${what}: diff and build --compare exit 2 at /calibration`, () => {
      const d = copy(`bad-cal-${what.length}`);
      rehash(d, edit);
      const r = cli(["diff", base, d, "-o", join(d, "..", `bad-cal-diff-${what.length}`)]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(/manifest\.json: \/calibration: expected null or the calibration record/);
      const out = join(root, `bad-cal-cmp-${what.length}`);
      const b = cli(["build", scenario, "-o", out, "--compare", d, "--no-analysis"]);
      expect(b.code, b.stderr).toBe(2);
      expect(b.stderr).toMatch(/manifest\.json: \/calibration: expected null or the calibration record/);
      expect(existsSync(out)).toBe(false);
    });

  // diff writes each frequency's G_ref change to diff.json: an entry that is not an object, or one missing, gave a NaN
  // there and an internal error (exit 3: "Object can not safely be stringified. Received type number (NaN)")
  for (const [what, edit, re] of [
    ["a number", (m: any) => (m.perFrequency[1] = 0.5), /\/perFrequency\/1: expected \{ frequencyHz/],
    ["one entry short", (m: any) => m.perFrequency.pop(), /\/perFrequency: expected one entry per frequency \(2\), found 1/],
  ] as [string, (m: any) => void, RegExp][])
    it(`a perFrequency list with ${what}: diff exit 2 naming the pointer`, () => {
      const d = copy(`bad-perf-${what.length}`);
      rehash(d, edit);
      const r = cli(["diff", d, base, "-o", join(root, `bad-perf-diff-${what.length}`)]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(re);
    });

  it("the unchanged folder still reports (exit 0)", () => {
    const d = copy("disagree-none");
    const r = cli(["report", d, "-o", join(d, "r.html")]);
    expect(r.code, r.stderr).toBe(0);
  });
});
