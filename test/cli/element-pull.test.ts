/**
 * A steep element pattern pulls the beam's peak out of the array's own half-power main lobe
 * (README "Element pattern", "Pulled beams"): check (predicted from the ideal total pattern),
 * build and the report (from the realized peaks) say so, naming the beams; the beams and the
 * pulls are checked against a numpy brute force (test/fixtures/numpy/element_pull.py: the
 * ideal total pattern |AF|²·cos^q θ sampled every 1e-5 in u, climbed from the commanded
 * direction; pulled when the array factor alone is more than 10·log10 2 dB down at the peak —
 * common practice for the half-power main lobe).
 */
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";
import { loadScenario } from "../../src/io/scenario.js";
import { predictionStoppedNote, predictPulls } from "../../src/core/pattern/pull.js";

const SCRIPT = join(import.meta.dirname, "..", "fixtures", "numpy", "element_pull.py");
const HALF_POWER_DB = 10 * Math.log10(2);

const doc = (element: unknown) =>
  baseScenario({
    array: { lattice: { kind: "rectangular", columns: 16, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams: { kind: "azel", az: { from: -60, to: 60, step: 10 }, el: { from: 0, to: 0, step: 1 } },
    phaseShifter: { bits: 8 },
    taper: { kind: "uniform" },
    ...(element ? { element } : {}),
  });

/** The pull warning's count, beam list, worst beam's pull (°) and array-factor drop (dB). */
function pullOf(text: string): { count: number; beams: number[]; worstDeg: number; dropDb: number } | null {
  const m = /warning: (\d+) of \d+ beam\(s\) (?:are|will be) pulled by the .*? peak ([\d.]+)° away \(array factor ([\d.]+) dB down there[^)]*\); beams ([\d, ]+)\./.exec(text);
  return m ? { count: Number(m[1]), beams: m[4]!.split(", ").map(Number), worstDeg: Number(m[2]), dropDb: Number(m[3]) } : null;
}

describe("beams pulled by the element pattern", () => {
  itWith([TOOLS.numpy], "16 × 4 uniform, cos^40 θ, az −60…60°: check, build and report name the beams numpy finds pulled, and their pull", () => {
    const s = writeScenario(doc({ pattern: "cosine", exponent: 40 }));
    const py = spawnSync("/usr/bin/python3", [SCRIPT, s], { encoding: "utf8", timeout: 60_000 });
    expect(py.status, py.stderr).toBe(0);
    const ref = JSON.parse(py.stdout).beams as { beam: number; pointing_deg: number; af_drop_db: number; pulled: boolean }[];
    const pulled = ref.filter((b) => b.pulled);
    // the case must have both kinds, none of them on the fence (3.01 dB ± 0.3)
    expect(pulled.length).toBeGreaterThan(0);
    expect(pulled.length).toBeLessThan(ref.length);
    for (const b of ref) expect(Math.abs(b.af_drop_db - HALF_POWER_DB)).toBeGreaterThan(0.3);
    const worst = pulled.reduce((a, b) => (b.pointing_deg > a.pointing_deg ? b : a));

    const c = cli(["check", s]);
    expect(c.code, c.stderr).toBe(0);
    const pc = pullOf(c.stdout)!;
    expect(pc, c.stdout).not.toBeNull();
    expect(c.stdout).toMatch(/will be pulled by the cos\^40 θ element pattern beyond the array's half-power main lobe/);
    expect(pc.count).toBe(pulled.length);
    expect(pc.beams).toEqual(pulled.map((b) => b.beam));
    expect(pc.worstDeg).toBeCloseTo(worst.pointing_deg, 1); // printed to 0.01°
    expect(pc.dropDb).toBeCloseTo(worst.af_drop_db, 1);

    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    const pb = pullOf(r.stdout)!;
    expect(pb, r.stdout).not.toBeNull();
    expect(pb.beams).toEqual(pulled.map((b) => b.beam));
    expect(r.stdout).toMatch(/PSL -?[\d.]+ dB\); beams/);
    expect(r.stdout).toMatch(/describe the element pattern's pull, not quantisation/);
    // the realized peaks (8-bit phase) are the ideal ones to a few hundredths of a degree
    const rows = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Record<string, string>[];
    for (const b of ref) expect(Number(rows[b.beam]!.pointing_error_deg), `beam ${b.beam}`).toBeCloseTo(b.pointing_deg, 1);
    // beams not pulled whose PSL is still ≥ −3 dB (realized and ideal) get their own note, naming them from beams.csv
    const high = ref.filter((b) => !b.pulled && Number(rows[b.beam]!.psl_db) >= -HALF_POWER_DB && Number(rows[b.beam]!.psl_ideal_db) >= -HALF_POWER_DB).map((b) => b.beam);
    expect(high.length).toBeGreaterThan(0); // az ±30°: cos^40 θ is −25 dB there, the broadside sidelobes win
    expect(r.stdout).toMatch(new RegExp(`${high.length} beam\\(s\\) within their main lobe still have a PSL of −3 dB or more, the ideal taper's too \\(beams ${high.join(", ")}\\)`));
    const j = cli(["build", s, "-o", join(tempDir(), "j"), "--json"]);
    expect((JSON.parse(j.stdout).warnings as string[]).some((w) => /pulled by the cos\^40/.test(w))).toBe(true);

    const rep = cli(["report", out, "-o", join(out, "r.html")]);
    expect(rep.code, rep.stderr).toBe(0);
    expect(readFileSync(join(out, "r.html"), "utf8")).toMatch(new RegExp(`id="pull-note">Warning: ${pulled.length} of 13 beam\\(s\\) are pulled`));
  });

  it("check's prediction is bounded in work: stopped early, it has examined a prefix of the beams, found the same pulls there, and says so", () => {
    const plan = loadScenario(writeScenario(doc({ pattern: "cosine", exponent: 40 }))).plan;
    const full = predictPulls(plan);
    expect(full.examined).toBe(13);
    expect(full.pulls.length).toBeGreaterThan(2);
    // a bound that one climb already passes: the beams up to the first that leaves its cell
    const cut = predictPulls(plan, undefined, 1);
    expect(cut.examined).toBeLessThan(full.total);
    expect(cut.pulls).toEqual(full.pulls.filter((p) => p.beam < cut.examined));
    expect(predictionStoppedNote(cut)).toMatch(new RegExp(`predicted for the first ${cut.examined} of 13 beam\\(s\\) only .*build judges every realized peak`));
  });

  it("a line array's prediction uses the analysis's cut pattern: check predicts the beams and pulls that build finds (8×1 row, element rising 30 dB to the horizon, el 40°)", () => {
    let el = "theta_deg,phi_deg,gain_db\n";
    for (let t = 0; t <= 90; t += 3) for (const f of [0, 90, 180, 270]) el += `${t},${f},${(30 * (t / 90) ** 2).toFixed(6)}\n`;
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "azel", az: { from: 0, to: 60, step: 10 }, el: { from: 40, to: 40, step: 1 } },
      phaseShifter: { bits: 6 },
      element: { pattern: "table", file: "el.csv" },
    }), { "el.csv": el });
    const c = cli(["check", s]);
    expect(c.code, c.stderr).toBe(0);
    const b = cli(["build", s, "-o", join(tempDir(), "b")]);
    expect(b.code, b.stderr).toBe(0);
    const pc = pullOf(c.stdout), pb = pullOf(b.stdout);
    expect(pc, c.stdout).not.toBeNull();
    expect(pb, b.stdout).not.toBeNull();
    expect(pc!.beams).toEqual(pb!.beams);
    expect(pc!.worstDeg).toBeCloseTo(pb!.worstDeg, 1); // 6-bit phases: the realized peak is the ideal one to ~0.01°
  });

  // the worst pulled beam's psl_db can be empty (no sidelobe found): build and the report printed "PSL NaN dB".
  // Beam 4 (az 60°) has no sidelobe, as numpy/scipy's brute force (brute_beams.py) finds too
  // (psl_db −Infinity). Until step 4d's log model (lobes.ts) the az −60° … 60° grid served,
  // but its worst beam (az −60°) has a −100.14 dB lobe inside the flood (brute force the same)
  // that was missed; the list keeps az 60° as beam 4, so its randomized codes are the same.
  it("a worst pulled beam without a PSL is said to have none, not NaN (3×4 triangular at 0.25 λ, cos^100 θ, randomized)", () => {
    const s = writeScenario(
      baseScenario({
        array: { lattice: { kind: "triangular", columns: 3, rows: 4, dx: "0.25 lambda", dy: "0.5 lambda" } },
        beams: { kind: "list", file: "beams.csv" },
        phaseShifter: { bits: 4 },
        quantizer: { method: "randomized" },
        element: { pattern: "cosine", exponent: 100 },
      }),
      { "beams.csv": "az_deg,el_deg\n-30,0\n-15,0\n0,0\n30,0\n60,0\n" },
    );
    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    const rows = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Record<string, string>[];
    const worst = /worst beam (\d+) /.exec(r.stdout);
    expect(worst, r.stdout).not.toBeNull();
    expect(rows[Number(worst![1])]!.psl_db).toBe(""); // the case this test is about
    expect(r.stdout).toMatch(/PSL n\/a: no sidelobe found\); beams/);
    expect(r.stdout).not.toMatch(/NaN/);
    const rep = cli(["report", out, "-o", join(out, "r.html")]);
    expect(rep.code, rep.stderr).toBe(0);
    expect(readFileSync(join(out, "r.html"), "utf8")).not.toMatch(/PSL NaN/);
  });

  it("no warning with isotropic elements or a mild pattern (cos^1 θ) on the same grid", () => {
    for (const element of [null, { pattern: "cosine", exponent: 1 }]) {
      const s = writeScenario(doc(element));
      const c = cli(["check", s]);
      expect(c.code, c.stderr).toBe(0);
      expect(c.stdout).not.toMatch(/pulled/);
      const r = cli(["build", s, "-o", join(tempDir(), "b")]);
      expect(r.code, r.stderr).toBe(0);
      expect(r.stdout).not.toMatch(/pulled|within their main lobe still have a PSL/);
    }
  });

  // The contract's main lobe is the one around the peak nearest the commanded direction. With
  // cos^100 θ near the horizon the total pattern's lobes crowd against the dips past them and
  // its grid samples rose across a dip: build climbed to a lobe farther out (53.16° at az −85°)
  // while check (ideal pattern) and numpy found the nearest maximum 35.72° away.
  itWith([TOOLS.numpy], "8 × 8 at λ/2, cos^100 θ, az −89…−81°: check and build take the local maximum nearest the commanded direction, as numpy does (ideal and realized)", () => {
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 8, rows: 8, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "azel", az: { from: -89, to: -81, step: 4 }, el: { from: 0, to: 0, step: 1 } },
      phaseShifter: { bits: 6 },
      element: { pattern: "cosine", exponent: 100 },
    }));
    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    const py = spawnSync("/usr/bin/python3", [SCRIPT, s, out], { encoding: "utf8", timeout: 60_000 });
    expect(py.status, py.stderr).toBe(0);
    type Peak = { peak_u: number; pointing_deg: number; af_drop_db: number; pulled: boolean };
    const ref = JSON.parse(py.stdout).beams as (Peak & { beam: number; az_deg: number; global_pointing_deg: number; realized: Peak })[];
    expect(ref.map((b) => b.az_deg)).toEqual([-89, -85, -81]);
    // the case this test is about: every beam is pulled, and a lobe farther out is higher
    // than the nearest maximum (the global maximum is not the contract's peak)
    for (const b of ref) {
      expect(b.pulled && b.realized.pulled).toBe(true);
      expect(b.global_pointing_deg - b.pointing_deg).toBeGreaterThan(10);
    }
    // build: beams.csv's peak and pointing are numpy's realized nearest maximum
    const rows = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Record<string, string>[];
    for (const b of ref) {
      expect(Math.abs(Number(rows[b.beam]!.pointing_error_deg) - b.realized.pointing_deg), `beam ${b.beam}`).toBeLessThan(1e-3);
      expect(Math.abs(Number(rows[b.beam]!.peak_u) - b.realized.peak_u), `beam ${b.beam}`).toBeLessThan(1e-6);
    }
    const worstR = ref.reduce((a, b) => (b.realized.pointing_deg > a.realized.pointing_deg ? b : a));
    const pb = pullOf(r.stdout)!;
    expect(pb, r.stdout).not.toBeNull();
    expect(pb.beams).toEqual([0, 1, 2]);
    expect(pb.worstDeg).toBeCloseTo(worstR.realized.pointing_deg, 2);
    // check: the ideal nearest maximum
    const c = cli(["check", s]);
    expect(c.code, c.stderr).toBe(0);
    const pc = pullOf(c.stdout)!;
    expect(pc, c.stdout).not.toBeNull();
    expect(pc.beams).toEqual([0, 1, 2]);
    const worstI = ref.reduce((a, b) => (b.pointing_deg > a.pointing_deg ? b : a));
    expect(pc.worstDeg).toBeCloseTo(worstI.pointing_deg, 2);
    expect(pc.dropDb).toBeCloseTo(worstI.af_drop_db, 1);
    // check (ideal) and build (realized) differ by quantisation only: 6-bit phases move the peak
    // by a fraction of a degree, not to another lobe (the next lobe out is ~20° farther)
    for (const b of ref) expect(Math.abs(b.pointing_deg - b.realized.pointing_deg)).toBeLessThan(1);
    expect(Math.abs(pc.worstDeg - pb.worstDeg)).toBeLessThan(1);
  });
});
