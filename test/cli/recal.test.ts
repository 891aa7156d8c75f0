import { spawn } from "node:child_process";
import { cpSync, existsSync, readFileSync, readdirSync, truncateSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { parse } from "csv-parse/sync";
import { BIN, cli, tempDir, writeScenario, baseScenario } from "../helpers.js";
import { loadScenario } from "../../src/io/scenario.js";
import { runBuild, stableJson } from "../../src/io/build.js";
import { diffBuilds, scanDiff } from "../../src/io/diff.js";
import { diffJsonChunks } from "../../src/cli/diff.js";

const DEMO = join(import.meta.dirname, "..", "..", "fixtures", "demo");

function editCal(path: string, ids: number[], dPhase: number, dGain: number): void {
  const lines = readFileSync(path, "utf8").split("\n").map((l) => {
    const m = /^(\d+),([-\d.]+),([-\d.]+)$/.exec(l);
    if (!m || !ids.includes(Number(m[1]))) return l;
    return `${m[1]},${(Number(m[2]) + dPhase).toFixed(2)},${(Number(m[3]) + dGain).toFixed(3)}`;
  });
  writeFileSync(path, lines.join("\n").replace("date: 2026-11-20", "date: 2026-11-27"));
}

describe("recalibration loop: build, change calibration, build --compare, diff, verify", () => {
  const t = tempDir();
  const demo = join(t, "demo");
  cpSync(DEMO, demo, { recursive: true });
  const b1 = join(t, "b1"), b2 = join(t, "b2");

  it("finds exactly the words of the recalibrated elements", () => {
    expect(cli(["build", join(demo, "scenario.json"), "-o", b1, "--no-analysis"]).code).toBe(0);
    editCal(join(demo, "cal.csv"), [5, 6, 200], 7.5, 0);
    const r = cli(["build", join(demo, "scenario.json"), "-o", b2, "--no-analysis", "--compare", b1, "--json"]);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.compare.identical).toBe(false);
    expect(doc.compare.summary.elementsTouched).toBeLessThanOrEqual(3);
    expect(doc.manifest.calibration.comments.join(" ")).toMatch(/2026-11-27/);
    const changes = parse(readFileSync(join(b2, "changes.csv")), { columns: true }) as Record<string, string>[];
    expect(changes.length).toBe(doc.compare.summary.wordsChanged);
    expect(new Set(changes.map((c) => c.element))).toEqual(new Set(["5", "6", "200"]));
    // 7.5° on a 6-bit shifter (LSB 5.625°) moves a code by 1 or 2 LSB
    for (const c of changes) {
      const d = (Number(c.old_phase_code) - Number(c.new_phase_code) + 64) % 64;
      expect([1, 2]).toContain(d);
      expect(c.old_atten_code).toBe(c.new_atten_code);
    }
  });

  it("diff agrees with build --compare and exits 1; identical builds exit 0", () => {
    const r = cli(["diff", b1, b2, "--json"]);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.stdout);
    const csv = parse(readFileSync(join(b2, "changes.csv")), { columns: true }) as Record<string, string>[];
    expect(doc.changes.length).toBe(csv.length);
    expect(doc.changes[0].old_word).toBe(Number(csv[0]!.old_word));
    expect(cli(["diff", b1, b1]).code).toBe(0);
    const out = join(t, "d");
    expect(cli(["diff", b1, b2, "-o", out]).code).toBe(1);
    expect(readdirSync(out).sort()).toEqual(["changes.csv", "diff.json"]);
  });

  it("diff --json is streamed change by change, byte for byte what one stableJson of the whole document prints", () => {
    for (const [x, y] of [[b1, b2], [b1, b1]] as const) {
      const full = diffBuilds(x, y);
      const want = stableJson({ identical: full.identical, summary: full.summary, changes: full.changes }, null, 2) + "\n";
      for (const per of [1, 7, 4096]) expect([...diffJsonChunks(scanDiff(x, y), per)].join("")).toBe(want);
      expect(cli(["diff", x, y, "--json"]).stdout).toBe(want);
    }
  });

  it("tables past what diff reads whole are refused with a message (exit 2), not a crash: sparse files stand in for big ones", () => {
    const big = join(t, "big-bin");
    cpSync(b2, big, { recursive: true });
    truncateSync(join(big, "table.bin"), 2 ** 31); // one byte past 2 GiB − 1; sparse: no disk used
    let r = cli(["diff", b1, big]);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/table\.bin: is 2147483648 bytes; expected at most 2147483647: diff reads table\.bin whole, up to 2 GiB/);
    const s = writeScenario(baseScenario({ outputs: ["mem"] }), {}, join(t, "mem-s"));
    const m1 = join(t, "mem-1"), m2 = join(t, "mem-2");
    expect(cli(["build", s, "-o", m1, "--no-analysis"]).code).toBe(0);
    cpSync(m1, m2, { recursive: true });
    truncateSync(join(m2, "table.mem"), 2 ** 29);
    r = cli(["diff", m1, m2]);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/table\.mem: is 536870912 bytes; expected at most 536870888: diff reads a text table whole, up to 512 MiB; build with "bin" among the outputs/);
  });

  it("diff names the changed elements, prints both calibrations with their header comments, words in hex and decimal; diff.json keeps full hashes (issue 8 item 8)", () => {
    const r = cli(["diff", b1, b2]);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/^changed elements 5, 6, 200$/m);
    const m1 = JSON.parse(readFileSync(join(b1, "manifest.json"), "utf8"));
    const m2 = JSON.parse(readFileSync(join(b2, "manifest.json"), "utf8"));
    // README: diff says which calibration (file name, SHA-256, header comments) produced each build
    expect(r.stdout).toContain(`old: cal.csv (sha256 ${m1.calibration.sha256})`);
    expect(r.stdout).toContain(`new: cal.csv (sha256 ${m2.calibration.sha256})`);
    expect(r.stdout).toMatch(/^ {4}# date: 2026-11-20/m);
    expect(r.stdout).toMatch(/^ {4}# date: 2026-11-27/m);
    // common practice: a 16-bit word is 4 hex digits; the hex and decimal spellings name the same word
    const row = /^28000000000 +(\d+) +(\d+) +0x([0-9A-F]{4}) \((\d+)\) +→ 0x([0-9A-F]{4}) \((\d+)\)/m.exec(r.stdout);
    expect(row).not.toBeNull();
    expect(parseInt(row![3]!, 16)).toBe(Number(row![4]));
    expect(parseInt(row![5]!, 16)).toBe(Number(row![6]));
    const doc = JSON.parse(readFileSync(join(t, "d", "diff.json"), "utf8"));
    expect(JSON.stringify(doc)).not.toContain("…");
    expect(doc.summary.oldCalibration.sha256).toBe(m1.calibration.sha256);
    expect(doc.summary.newCalibration.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(doc.summary.newCalibration.comments.join(" ")).toMatch(/2026-11-27/);
    expect(doc.summary.elementsChanged).toEqual([5, 6, 200]);
    // the report of the diff folder reads the same summary: ids, full hashes, header comments
    const page = join(t, "diff-report.html");
    expect(cli(["report", join(t, "d"), "-o", page]).code).toBe(0);
    const html = readFileSync(page, "utf8");
    expect(html).toContain("changed element ids: 5, 6, 200");
    expect(html).toContain(`SHA-256 ${m2.calibration.sha256}`);
    expect(html).toMatch(/date: 2026-11-27/);
  });

  it("builds with different element sets cannot be compared (exit 2, said plainly)", () => {
    const other = join(t, "other");
    const s = writeScenario(baseScenario({ outputs: ["bin"] }));
    expect(cli(["build", s, "-o", other, "--no-analysis"]).code).toBe(0);
    const r = cli(["diff", b1, other]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/cannot be compared word by word: .*element counts differ \(256 vs 8\)/);
  });

  it("verify passes on a fresh build, also after the folder is copied elsewhere", () => {
    expect(cli(["verify", b2]).code).toBe(0);
    const copy = join(tempDir(), "moved");
    cpSync(b2, copy, { recursive: true });
    const r = cli(["verify", copy, "--json"]);
    expect(r.code).toBe(0);
    const checks = JSON.parse(r.stdout).checks as { check: string; ok: boolean; detail: string }[];
    // every table file and the manifest were regenerated from the inputs and compared
    for (const f of ["codes.csv", "table.bin", "table.h", "table.mem", "table.json", "manifest.json"]) expect(checks.find((c) => c.check === f)?.detail).toMatch(/identical to the .*(recomputed|regenerated) from the recorded inputs/);
  });

  it("verify names the first file and (frequency, beam, element) that disagree", () => {
    const bad = join(tempDir(), "bad");
    cpSync(b2, bad, { recursive: true });
    const mem = readFileSync(join(bad, "table.mem"), "utf8").split("\n");
    // word index 300 = beam 1, element 44 (256 elements a beam); +2 for the two comment lines
    mem[302] = mem[302] === "0000" ? "0001" : "0000";
    writeFileSync(join(bad, "table.mem"), mem.join("\n"));
    const r = cli(["verify", bad, "--json"]);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.stdout);
    expect(doc.firstMismatch).toMatchObject({ file: "table.mem", beam: 1, element: 44 });
  });

  it("verify catches a table that no longer matches its recorded inputs", () => {
    const bad = join(tempDir(), "bad2");
    cpSync(b2, bad, { recursive: true });
    // edit the copied calibration and re-hash everything so only the recomputation can tell
    const cal = join(bad, "inputs", "calibration.csv");
    editCal(cal, [7], 90, 0);
    const m = JSON.parse(readFileSync(join(bad, "manifest.json"), "utf8"));
    const { createHash } = require("node:crypto") as typeof import("node:crypto");
    m.files["inputs/calibration.csv"].sha256 = createHash("sha256").update(readFileSync(cal)).digest("hex");
    m.files["inputs/calibration.csv"].bytes = readFileSync(cal).length;
    writeFileSync(join(bad, "manifest.json"), JSON.stringify(m, null, 2));
    const r = cli(["verify", bad, "--json"]);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.stdout);
    expect(doc.checks.find((c: { check: string; ok: boolean }) => c.check === "codes.csv").ok).toBe(false);
    expect(doc.firstMismatch).toMatchObject({ file: "codes.csv", element: 7 });
  });
});

/** Every file below `dir`, relative, with its bytes. */
function folderFiles(dir: string): Map<string, Buffer> {
  const out = new Map<string, Buffer>();
  for (const e of readdirSync(dir, { recursive: true, withFileTypes: true })) if (e.isFile()) {
    const abs = join(e.parentPath, e.name);
    out.set(abs.slice(dir.length + 1), readFileSync(abs));
  }
  return out;
}

// `build B/inputs/scenario.json` was exit 2, "cal.csv: /calibration: file not found (B/inputs/cal.csv)":
// the demo's scenario says "calibration": "cal.csv" and the build stores it as inputs/calibration.csv
describe("rebuilding from a build's inputs/ (the loop closes on the recorded inputs)", () => {
  const t = tempDir();
  const demo = join(t, "demo");
  cpSync(DEMO, demo, { recursive: true });
  const b = join(t, "b");

  it("build B/inputs/scenario.json gives B again, byte for byte (manifest included); verify and diff agree", () => {
    expect(cli(["build", join(demo, "scenario.json"), "-o", b, "--no-analysis"]).code).toBe(0);
    const r = join(t, "r");
    const built = cli(["build", join(b, "inputs", "scenario.json"), "-o", r, "--no-analysis"]);
    expect(built.stderr).toBe("");
    expect(built.code).toBe(0);
    const [fb, fr] = [folderFiles(b), folderFiles(r)];
    expect([...fr.keys()].sort()).toEqual([...fb.keys()].sort());
    for (const [k, v] of fb) expect(fr.get(k)!.equals(v), k).toBe(true);
    expect(cli(["verify", r, "--jobs", "1"]).code).toBe(0);
    const d = cli(["diff", b, r, "--json"]);
    expect(d.code).toBe(0);
    expect(JSON.parse(d.stdout).identical).toBe(true);
  });

  it("a calibration changed in the recorded inputs rebuilds as a fresh build of the changed scenario does", () => {
    const b2 = join(t, "b2");
    cpSync(b, b2, { recursive: true });
    editCal(join(b2, "inputs", "calibration.csv"), [5, 6, 200], 7.5, 0);
    const demo2 = join(t, "demo2");
    cpSync(DEMO, demo2, { recursive: true });
    editCal(join(demo2, "cal.csv"), [5, 6, 200], 7.5, 0);
    const fresh = join(t, "fresh"), again = join(t, "again");
    expect(cli(["build", join(demo2, "scenario.json"), "-o", fresh, "--no-analysis"]).code).toBe(0);
    expect(cli(["build", join(b2, "inputs", "scenario.json"), "-o", again, "--no-analysis"]).code).toBe(0);
    const [ff, fa] = [folderFiles(fresh), folderFiles(again)];
    expect([...fa.keys()].sort()).toEqual([...ff.keys()].sort());
    for (const [k, v] of ff) expect(fa.get(k)!.equals(v), k).toBe(true);
    const d = cli(["diff", b, again, "--json"]);
    expect(d.code).toBe(1);
    expect(new Set((JSON.parse(d.stdout).changes as { element: number }[]).map((c) => c.element))).toEqual(new Set([5, 6, 200]));
  });

  it("a build folder whose manifest maps an input to another name is refused there (exit 2, nothing written); a folder named inputs without a manifest is read as usual", () => {
    const b3 = join(t, "b3");
    cpSync(b, b3, { recursive: true });
    const m = JSON.parse(readFileSync(join(b3, "manifest.json"), "utf8"));
    m.inputs[0].copy = "../../demo/cal.csv";
    writeFileSync(join(b3, "manifest.json"), JSON.stringify(m));
    const out = join(t, "r3");
    const r = cli(["build", join(b3, "inputs", "scenario.json"), "-o", out, "--no-analysis"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/manifest\.json: \/inputs\/0: expected \{ role, ref, copy \} with copy inputs\/<role>\.csv/);
    expect(existsSync(out)).toBe(false);
    const plain = join(t, "plain", "inputs");
    cpSync(DEMO, plain, { recursive: true });
    expect(cli(["build", join(plain, "scenario.json"), "-o", join(t, "r4"), "--no-analysis"]).code).toBe(0);
  });
});

describe("faults: a build that dies midway leaves the previous output intact and nothing half-written", () => {
  const big = () => {
    const d = tempDir();
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 64, rows: 64, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.01 }, v: { from: -0.6, to: 0.6, step: 0.02 } },
      phaseShifter: { bits: 6 },
    }), {}, d);
    return { d, s };
  };
  for (const sig of ["SIGINT", "SIGTERM"] as const) {
    it(`${sig} during a real build`, async () => {
      const { d, s } = big();
      const out = join(d, "out");
      // the previous output: a small but real build in the same folder
      const small = writeScenario(baseScenario({ outputs: ["bin"] }), {}, join(d, "small"));
      expect(cli(["build", small, "-o", out, "--no-analysis"]).code).toBe(0);
      const before = readFileSync(join(out, "manifest.json"));
      const child = spawn(process.execPath, [BIN, "build", s, "-o", out, "--no-analysis"], { stdio: "ignore" });
      // wait until the staging folder exists, i.e. the build is under way
      const t0 = Date.now();
      while (!readdirSync(d).some((n) => n.includes("steercode-tmp")) && Date.now() - t0 < 20000) await new Promise((r) => setTimeout(r, 10));
      expect(readdirSync(d).some((n) => n.includes("steercode-tmp"))).toBe(true);
      child.kill(sig);
      const code = await new Promise<number | null>((r) => child.on("exit", (c) => r(c)));
      expect(code).toBe(sig === "SIGINT" ? 130 : 143);
      expect(readFileSync(join(out, "manifest.json")).equals(before)).toBe(true);
      expect(readdirSync(d).filter((n) => n.startsWith(".")).length).toBe(0);
    });
  }

  it("a thrown error in an analysis worker aborts the build; the previous output stays", async () => {
    const d = tempDir();
    const s = writeScenario(baseScenario({ beams: { kind: "uv", u: { from: -0.5, to: 0.5, step: 0.05 }, v: { from: 0, to: 0, step: 1 } } }), {}, d);
    const out = join(d, "out");
    await runBuild(loadScenario(s), out, { analysis: true, jobs: 1 });
    const before = readFileSync(join(out, "manifest.json"));
    await expect(runBuild(loadScenario(s), out, { analysis: true, jobs: 2, failAnalysisForTest: true })).rejects.toThrow(/injected worker failure/);
    await expect(runBuild(loadScenario(s), out, { analysis: true, jobs: 1, failAnalysisForTest: true })).rejects.toThrow(/injected analysis failure/);
    expect(readFileSync(join(out, "manifest.json")).equals(before)).toBe(true);
    expect(readdirSync(d).filter((n) => n.startsWith(".")).length).toBe(0);
    expect(existsSync(join(out, "beams.csv"))).toBe(true);
  });
});
