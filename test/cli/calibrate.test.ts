/**
 * `steercode calibrate` from the command line, and calibration per frequency through
 * build, check, diff and verify (simulated readings: test/calibrate-sim.ts; invented).
 */
import { cpSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, load, tempDir } from "../helpers.js";
import { idealStates, randomTruth, revCsv, simulateRev } from "../calibrate-sim.js";

const DOC = baseScenario({
  frequency: ["9.5 GHz", "10 GHz", "10.5 GHz"],
  array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" }, disabled: [15] },
  phaseShifter: { bits: 3 },
  outputs: ["csv", "bin"],
});

describe("steercode calibrate → build → check → diff → verify", () => {
  const dir = tempDir();
  const plan = load(DOC).plan;
  const truth = randomTruth(16, 5);
  // the channels drift with frequency: 10.5 GHz adds 3° per element id and 0.1 dB per element id
  const drift = { phaseDeg: truth.phaseDeg.map((p, i) => p + 3 * i), gainDb: truth.gainDb.map((g, i) => g + 0.1 * i) };
  const rows = (["9500000000", "10500000000"] as const).flatMap((f, j) =>
    simulateRev(plan, j ? drift : truth, { states: idealStates(3), probe: { kind: "far", azDeg: 0, elDeg: 0 }, codes: [0, 1, 2, 3, 4, 5, 6, 7], noiseDb: 0.01, seed: 7 + j, fHz: Number(f) }).map((r) => ({ ...r, frequencyHz: f })),
  );
  writeFileSync(join(dir, "rev.csv"), revCsv(rows));
  writeFileSync(join(dir, "scenario.json"), JSON.stringify({ ...DOC, calibration: "cal.csv" }));
  writeFileSync(join(dir, "single.json"), JSON.stringify({ ...DOC, calibration: "single.csv" }));
  const cal = join(dir, "cal.csv");

  it("writes cal.csv with its # lines; identical inputs give identical bytes", () => {
    const args = ["calibrate", join(dir, "scenario.json"), "--data", join(dir, "rev.csv"), "--method", "rev", "-o", cal];
    const r = cli(args);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/wrote .*cal\.csv .*15 element\(s\) × 2 frequencies, method rev/);
    expect(r.stdout).toMatch(/no readings for disabled element\(s\) 15: written as 0, 0/);
    const text = readFileSync(cal, "utf8");
    expect(text).toMatch(/^# steercode calibrate: method rev \(rotating-element electric-field-vector method \(Mano & Katagi, 1982\)\)\n# data: rev\.csv sha256 [0-9a-f]{64}\n/);
    expect(text).toMatch(/\n# probe: far field, az 0 deg, el 0 deg/);
    expect(text).toMatch(/\n# frequencies: 9500000000, 10500000000 Hz\n# rms fit residual: 0\.0\d{3} dB over 240 readings/);
    expect(text).toMatch(/\nfrequency_hz,element,phase_offset_deg,gain_offset_db\n9500000000,0,/);
    expect(text.trim().split("\n").filter((l) => /^\d/.test(l))).toHaveLength(32);
    expect(cli(args).code).toBe(0);
    expect(readFileSync(cal, "utf8")).toBe(text);
  });

  it("--json gives every element: amplitude, phase, residual, both roots, the kept one and why", () => {
    const r = cli(["calibrate", join(dir, "scenario.json"), "--data", join(dir, "rev.csv"), "--method", "rev", "-o", join(dir, "cal2.csv"), "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.frequencies).toHaveLength(2);
    const e = doc.frequencies[0].elements[0];
    for (const k of ["phaseDeg", "gainDb", "residualDb", "phaseStdDeg", "gainStdDb", "roots", "kept", "decided", "why", "flags", "advice", "lines"]) expect(e).toHaveProperty(k);
    expect(e.roots).toHaveLength(2);
    expect(e.why).toMatch(/far smaller than the whole array's/);
    expect(readFileSync(join(dir, "cal2.csv"), "utf8")).toBe(readFileSync(cal, "utf8"));
  });

  it("build records which rows served each frequency and whether they were interpolated; check says so; verify re-derives it", () => {
    const b = cli(["build", join(dir, "scenario.json"), "-o", join(dir, "b1"), "--no-analysis", "--json"]);
    expect(b.code, b.stderr).toBe(0);
    const served = JSON.parse(b.stdout).manifest.calibration.perFrequency;
    expect(served.map((s: { interpolated: boolean }) => s.interpolated)).toEqual([false, true, false]);
    expect(served[0].from).toEqual([{ frequencyHz: "9500000000", lines: "10–25", weight: "1" }]);
    expect(served[1].from.map((f: { weight: string; lines: string }) => [f.weight, f.lines])).toEqual([["0.5", "10–25"], ["0.5", "26–41"]]);
    const c = cli(["check", join(dir, "scenario.json")]);
    expect(c.stdout).toMatch(/calibration +interpolated: 0\.5 × the 9500000000 Hz set \(lines 10–25\) \+ 0\.5 × the 10500000000 Hz set \(lines 26–41\)/);
    const v = cli(["verify", join(dir, "b1"), "--json"]);
    expect(v.code, v.stdout).toBe(0);
    // verify regenerates manifest.json from the recorded inputs: an edited record of the rows is caught
    const bad = join(dir, "b1-edited");
    cpSync(join(dir, "b1"), bad, { recursive: true });
    const mp = join(bad, "manifest.json");
    writeFileSync(mp, readFileSync(mp, "utf8").replace('"weight": "0.5"', '"weight": "0.6"'));
    expect(readFileSync(mp, "utf8")).toMatch(/"weight": "0.6"/);
    expect(cli(["verify", bad]).code).not.toBe(0);
  });

  it("diff names the calibration rows that served each frequency before and after", () => {
    // one set for every frequency: the 9.5 GHz rows of the produced file, without the column
    const lines = readFileSync(cal, "utf8").split("\n").filter((l) => l.startsWith("9500000000,")).map((l) => l.split(",").slice(1).join(","));
    writeFileSync(join(dir, "single.csv"), "element,phase_offset_deg,gain_offset_db\n" + lines.join("\n") + "\n");
    expect(cli(["build", join(dir, "single.json"), "-o", join(dir, "b0"), "--no-analysis"]).code).toBe(0);
    const d = cli(["diff", join(dir, "b0"), join(dir, "b1"), "--json"]);
    expect(d.code).toBe(1);
    const s = JSON.parse(d.stdout).summary;
    expect(s.calibrationServed.map((c: { changed: boolean }) => c.changed)).toEqual([true, true, true]);
    expect(new Set(JSON.parse(d.stdout).changes.map((c: { frequency_hz: string }) => c.frequency_hz))).toEqual(new Set(["10000000000", "10500000000"]));
    // at 9.5 GHz the same offsets are used: no word of that frequency changes
    expect(JSON.parse(d.stdout).changes.filter((c: { frequency_hz: string }) => c.frequency_hz === "9500000000")).toEqual([]);
    const t = cli(["diff", join(dir, "b0"), join(dir, "b1")]);
    expect(t.stdout).toMatch(/calibration at 10000000000 Hz: one set for every frequency → interpolated/);
  });

  it("the field method and a near-field probe", () => {
    // derived: a channel measured alone at the probe point p reads w_n·exp(−jk|p − r_n|)/|p − r_n|
    const one = { ...DOC, frequency: "10 GHz" };
    const onePlan = load(one).plan;
    const p = [0.02, 0.01, 0.3];
    const k = (2 * Math.PI * 10e9) / 299792458;
    const lines = ["element,amplitude_db,phase_deg"];
    for (let i = 0; i < 15; i++) {
      const r = Math.hypot(p[0]! - onePlan.elements.x[i]!, p[1]! - onePlan.elements.y[i]!, p[2]! - onePlan.elements.z[i]!);
      lines.push(`${i},${(truth.gainDb[i]! - 20 * Math.log10(r)).toFixed(9)},${(truth.phaseDeg[i]! - (k * r * 180) / Math.PI).toFixed(9)}`);
    }
    writeFileSync(join(dir, "field.csv"), lines.join("\n") + "\n");
    writeFileSync(join(dir, "one.json"), JSON.stringify(one));
    const r = cli(["calibrate", join(dir, "one.json"), "--data", join(dir, "field.csv"), "--method", "field", "--probe-position", p.join(","), "-o", join(dir, "field-cal.csv"), "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const els = JSON.parse(r.stdout).frequencies[0].elements as { element: number; phaseDeg: number; gainDb: number }[];
    // compare phase differences to element 0 (offsets are defined up to a common phase and gain)
    for (const e of els) {
      const d = e.phaseDeg - els[0]!.phaseDeg - (truth.phaseDeg[e.element]! - truth.phaseDeg[0]!);
      expect(Math.abs(d - 360 * Math.round(d / 360))).toBeLessThan(1e-6);
      expect(Math.abs(e.gainDb - els[0]!.gainDb - (truth.gainDb[e.element]! - truth.gainDb[0]!))).toBeLessThan(1e-7);
    }
    expect(readFileSync(join(dir, "field-cal.csv"), "utf8")).toMatch(/# rms fit residual: none/);
    // a probe point on an element: exit 2 naming the probe position and the element, not the data file (which is fine)
    const e0 = [onePlan.elements.x[4]!, onePlan.elements.y[4]!, onePlan.elements.z[4]!];
    for (const [q, how] of [[e0, "on"], [[e0[0]!, e0[1]!, e0[2]! + 4e-7], "4.00e-7 m from"]] as const) {
      const bad = cli(["calibrate", join(dir, "one.json"), "--data", join(dir, "field.csv"), "--method", "field", "--probe-position", q.join(","), "-o", join(dir, "bad-cal.csv")]);
      expect(bad.code).toBe(2);
      expect(bad.stderr).toContain(`probe position (${q.join(", ")}) m: ${how} element ${onePlan.elements.ids[4]} of one.json`);
      expect(bad.stderr).not.toMatch(/field\.csv/);
      expect(bad.stderr).not.toMatch(/\n\s+at /);
    }
  });
});

describe("the demo walk-through (README): two simulated range sessions", () => {
  it("calibrate → build → calibrate → build --compare: the swapped channels move, noise flips codes by one step", () => {
    const d = tempDir();
    expect(cli(["init", join(d, "demo")]).code).toBe(0);
    const S = join(d, "demo", "scenario.json");
    const sess = (n: number) => {
      const r = cli(["calibrate", S, "--data", join(d, "demo", `range-rev-${n}.csv`), "--method", "rev", "-o", join(d, "demo", "cal.csv"), "--json"]);
      expect(r.code, r.stderr).toBe(0);
      return JSON.parse(r.stdout);
    };
    const s1 = sess(1);
    expect(cli(["build", S, "-o", join(d, "b1"), "--no-analysis"]).code).toBe(0);
    const s2 = sess(2);
    const b = cli(["build", S, "-o", join(d, "b2"), "--no-analysis", "--compare", join(d, "b1"), "--json"]);
    expect(b.code, b.stderr).toBe(0);
    const cmp = JSON.parse(b.stdout).compare.summary;
    const med = (a: number[]) => [...a].sort((x, y) => x - y)[a.length >> 1]!;
    const ph = med(s1.frequencies[0].elements.map((e: { phaseStdDeg: number }) => e.phaseStdDeg));
    const g = med(s1.frequencies[0].elements.map((e: { gainStdDb: number }) => e.gainStdDb));
    // README: "about 0.3° and 0.05 dB (1σ, median channel)", "about a fifth of the words, by 1 LSB or 1 step; swapped channels up to 2 LSB"
    expect(ph).toBeGreaterThan(0.2);
    expect(ph).toBeLessThan(0.5);
    expect(g).toBeGreaterThan(0.03);
    expect(g).toBeLessThan(0.1);
    expect(cmp.wordsChanged / cmp.wordsCompared).toBeGreaterThan(0.12);
    expect(cmp.wordsChanged / cmp.wordsCompared).toBeLessThan(0.28);
    expect(cmp.largestPhaseChangeLsb).toBeLessThanOrEqual(2);
    expect(cmp.largestAttenChangeSteps).toBeLessThanOrEqual(1);
    // the swapped channels (+7.5°, −0.4 dB) show in the offsets themselves
    const by = (s: { frequencies: { elements: { element: number; phaseDeg: number; gainDb: number }[] }[] }, id: number) => s.frequencies[0]!.elements.find((e) => e.element === id)!;
    for (const id of [5, 6, 200]) {
      const dp = by(s2, id).phaseDeg - by(s1, id).phaseDeg;
      expect(Math.abs(dp - 360 * Math.round(dp / 360) - 7.5)).toBeLessThan(3);
      expect(Math.abs(by(s2, id).gainDb - by(s1, id).gainDb + 0.4)).toBeLessThan(0.3);
    }
    console.log(`demo: median 1σ ${ph.toFixed(2)}° / ${g.toFixed(3)} dB; ${cmp.wordsChanged} of ${cmp.wordsCompared} words changed`);
  }, 120_000);
});
