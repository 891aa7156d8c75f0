import { execFileSync } from "node:child_process";
import { itWith, TOOLS } from "../tools.js";
import { existsSync, readdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { availableParallelism } from "node:os";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";

describe("init", () => {
  it("writes the invented demo and refuses to overwrite it", () => {
    const d = join(tempDir(), "demo");
    expect(cli(["init", d]).code).toBe(0);
    expect(readFileSync(join(d, "cal.csv"), "utf8")).toMatch(/INVENTED/);
    expect(JSON.parse(readFileSync(join(d, "scenario.json"), "utf8")).name).toMatch(/invented/);
    const again = cli(["init", d]);
    expect(again.code).toBe(2);
    expect(again.stderr).toMatch(/refusing to overwrite/);
  });
});

describe("check", () => {
  it("prints the derived facts of the demo (--json)", () => {
    const r = cli(["check", join(import.meta.dirname, "..", "..", "fixtures", "demo", "scenario.json"), "--json"]);
    expect(r.code).toBe(0);
    const f = JSON.parse(r.stdout).facts;
    const lambda = 299792458 / 28e9;
    expect(f.perFrequency[0].wavelengthM).toBeCloseTo(lambda, 15);
    expect(f.perFrequency[0].dxLambda).toBeCloseTo(0.0052 / lambda, 12);
    // d/λ = 0.4857 < 0.5: no grating lobe anywhere in visible space (Mailloux ch. 1, from memory)
    expect(f.perFrequency[0].scanLimitXDeg).toBe(90);
    const D = Math.hypot(16 * 0.0052, 16 * 0.0052);
    expect(f.perFrequency[0].farFieldM).toBeCloseTo((2 * D * D) / lambda, 9); // common practice: 2D²/λ
    expect(f.elements).toBe(256);
    expect(f.enabledElements).toBe(255);
    expect(f.tableBytes).toBe(133 * 256 * 2);
  });

  it("lists every calibration row problem at once, exit 2", () => {
    const cal = "element,phase_offset_deg,gain_offset_db\n0,0,0\n0,1,0\n42,0,0\n";
    const s = writeScenario(baseScenario({ calibration: "cal.csv" }), { "cal.csv": cal });
    const r = cli(["check", s]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/line 3, column element: element 0 is listed twice/);
    expect(r.stderr).toMatch(/line 4, column element: element 42 is not in the array/);
    expect(r.stderr).toMatch(/missing 7 element\(s\): 1–7/);
  });

  it("warns about clipping and grating lobes", () => {
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.8 lambda", dy: "0.5 lambda" } },
      taper: { kind: "chebyshev", sidelobe: "-40 dB" },
      attenuator: { bits: 2, step: "1 dB" },
    }));
    const r = cli(["check", s]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/warning: .*beams put a grating lobe into visible space/);
    expect(r.stdout).toMatch(/warning: .*element\(s\) need more attenuation than the attenuator's 3\.00 dB range/);
    expect(r.stdout).toMatch(/RF safety/);
  });

  // steps that do not divide the span ended short of "to" without a word; an attenuator of 0 bits beside an "atten" field
  it("says when a grid or band step stops short of \"to\", and when an atten field holds 0 because the attenuator has no bits", () => {
    const s = writeScenario(baseScenario({
      beams: { kind: "azel", az: { from: -45, to: 45, step: 7 }, el: { from: -0.3, to: 0.3, step: 0.3 } },
      band: { from: "9.5 GHz", to: "10.5 GHz", step: "0.3 GHz" },
      attenuator: { bits: 0, step: "1 dB" },
    }));
    const r = cli(["check", s, "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const w: string[] = JSON.parse(r.stdout).warnings;
    // derived by hand: −45 + 12·7 = 39; 9.5 + 3·0.3 = 10.4 GHz; the el axis −0.3 … 0.3 in 0.3 ends on "to" (exact decimals)
    expect(w).toContain('/beams/az: step 7 does not divide -45 … 45: the grid ends at 39, 6 short of "to"');
    expect(w).toContain('/band: the step does not divide 9.5 GHz … 10.5 GHz: the band ends at 10.4 GHz, 0.1 GHz short of "to"');
    expect(w.filter((x) => x.startsWith("/beams/el"))).toEqual([]);
    expect(w).toContain('no attenuator ("bits": 0) but the word has a 8-bit "atten" field: it holds 0 (no attenuation) in every word; the taper and calibration gains are not applied');
    const b = cli(["build", s, "-o", join(tempDir(), "out"), "--no-analysis"]);
    expect(b.code, b.stderr).toBe(0);
    expect(b.stderr + b.stdout).toMatch(/warning: \/beams\/az: step 7 does not divide -45 … 45/);
  });

  it("prints a scenario name and calibration comments with their control characters escaped (ESC [2J cleared the terminal)", () => {
    const s = writeScenario(baseScenario({ name: "panel\u001b[2J\u0007", calibration: "cal.csv" }), { "cal.csv": "# made \u001b[31mred\nelement,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 8 }, (_, i) => `${i},0,0`).join("\n") + "\n" });
    const r = cli(["check", s]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain("(panel\\u001b[2J\\u0007)");
    expect(r.stdout).toContain("made \\u001b[31mred");
    expect(r.stdout).not.toMatch(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/);
    // --json keeps the text as it is (JSON escapes it)
    expect(JSON.parse(cli(["check", s, "--json"]).stdout).name).toBe("panel\u001b[2J\u0007");
  });

  it("warns when the analysis grid would pass its limit (28 THz on a 4 × 4 lattice); build --no-analysis still writes the tables", () => {
    // derived: the grid has (⌈2/du⌉ + 4)(⌈2/dv⌉ + 4) cells, du = λ/(5.2 mm·16) at 28 THz → 2.42e8 > 2048²
    const s = writeScenario(baseScenario({ frequency: "28 THz", array: { lattice: { kind: "rectangular", columns: 4, rows: 4, dx: "5.2 mm", dy: "5.2 mm" } } }));
    const r = cli(["check", s]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/warning: build, sweep and report refuse to analyse this scenario: the analysis grid would need 2\.42e\+8 cells .* at 28 THz the array spans 1943 λ × 1943 λ .*--no-analysis/);
    const out = join(tempDir(), "out");
    const b = cli(["build", s, "-o", out, "--no-analysis"]);
    expect(b.code, b.stderr).toBe(0);
    expect(existsSync(join(out, "table.bin"))).toBe(true);
    expect(existsSync(join(out, "beams.csv"))).toBe(false);
  });
});

describe("builds beyond the demo", () => {
  let triangularBuild: { out: string; word: number } | undefined;
  it("two frequencies, a triangular lattice: [frequency][beam][element] in every format, compiles, verifies", () => {
    const s = writeScenario(baseScenario({
      frequency: ["27.5 GHz", "29 GHz"],
      array: { lattice: { kind: "triangular", columns: 5, rows: 4, dx: "0.6 lambda", dy: "0.5 lambda", offset: 0.5 }, disabled: [7] },
      beams: { kind: "thetaphi", theta: { from: 0, to: 40, step: 20 }, phi: { from: 0, to: 90, step: 90 } },
      phaseShifter: { bits: 5 },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
    }));
    const out = join(tempDir(), "b");
    expect(cli(["build", s, "-o", out]).code).toBe(0);
    const json = JSON.parse(readFileSync(join(out, "table.json"), "utf8"));
    expect(json.words.length).toBe(2);
    expect(json.words[0].length).toBe(6);
    expect(json.words[0][0].length).toBe(20);
    expect(json.frequenciesHz).toEqual([27500000000, 29000000000]);
    expect(json.words[0].some((b: number[], i: number) => b.join() !== json.words[1][i].join())).toBe(true);
    expect(json.words[1][3][7]).toBe(0); // disabled: off word
    const beams = readFileSync(join(out, "beams.csv"), "utf8").trim().split("\n");
    expect(beams.length).toBe(1 + 12);
    expect(cli(["verify", out]).code).toBe(0);
    triangularBuild = { out, word: json.words[1][5][19] };
  });

  itWith([TOOLS.gcc], "the two-frequency triangular build's table.h compiles under gcc -std=c99 -pedantic -Werror and holds the same words", () => {
    expect(triangularBuild, "the build above must have run").toBeDefined();
    const { out, word } = triangularBuild!;
    const c = join(tempDir(), "m.c");
    writeFileSync(c, `#define STEERCODE_TABLE_IMPLEMENTATION\n#include "table.h"\n#include <stdio.h>\nint main(void){printf("%u", (unsigned)steercode_table[1][5][19]);return STEERCODE_FREQUENCIES == 2u ? 0 : 1;}\n`);
    execFileSync("gcc", ["-std=c99", "-Wall", "-Wextra", "-pedantic", "-Werror", "-I", out, "-o", c + ".out", c]);
    expect(Number(execFileSync(c + ".out", { encoding: "utf8" }))).toBe(word);
  });

  it("an element list carries device and channel to table.json and honours its enabled column", () => {
    const csv = "element,x_m,y_m,z_m,device,channel,enabled\n" + Array.from({ length: 6 }, (_, i) => `${10 + i},${(i * 0.012).toFixed(3)},0,0,BF${Math.floor(i / 4)},${i % 4},${i === 2 ? "no" : "yes"}`).join("\n") + "\n";
    const s = writeScenario(baseScenario({ array: { elements: "el.csv" } }), { "el.csv": csv });
    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out]);
    expect(r.code).toBe(0);
    // issue 8 item 8: the warning names the disabled element by its id (not its table index 2)
    expect(r.stdout).toMatch(/warning: 1 element\(s\) disabled \(element 12\): they get the off word/);
    const json = JSON.parse(readFileSync(join(out, "table.json"), "utf8"));
    expect(json.elements[5]).toMatchObject({ element: 15, device: "BF1", channel: "1", enabled: true });
    expect(json.elements[2].enabled).toBe(false);
    expect(json.words[0].every((b: number[]) => b[2] === 0)).toBe(true);
    const m = JSON.parse(readFileSync(join(out, "manifest.json"), "utf8"));
    expect(m.elementIds).toEqual([10, 11, 12, 13, 14, 15]);
    expect(m.disabledIds).toEqual([12]);
    expect(existsSync(join(out, "inputs", "elements.csv"))).toBe(true);
    expect(cli(["verify", out]).code).toBe(0);
  });

  it("a randomized build records its seed and is reproducible", () => {
    const s = writeScenario(baseScenario({ quantizer: { method: "randomized", seed: 4242 } }));
    const a = join(tempDir(), "a"), b = join(tempDir(), "b");
    expect(cli(["build", s, "-o", a, "--jobs", "1"]).code).toBe(0);
    expect(cli(["build", s, "-o", b, "--jobs", "2"]).code).toBe(0);
    expect(readFileSync(join(a, "table.bin")).equals(readFileSync(join(b, "table.bin")))).toBe(true);
    expect(readFileSync(join(a, "beams.csv")).equals(readFileSync(join(b, "beams.csv")))).toBe(true);
    expect(JSON.parse(readFileSync(join(a, "manifest.json"), "utf8")).quantizer).toEqual({ method: "randomized", seed: 4242 });
  });
});

describe("--jobs: how many threads analyse changes no byte", () => {
  it("workers started midway by the measured decision's switch (STEERCODE_SPAWN_AFTER) write the bytes of --jobs 1; verify with them passes", () => {
    const demo = join(import.meta.dirname, "..", "..", "fixtures", "demo", "scenario.json");
    const a = join(tempDir(), "a"), b = join(tempDir(), "b");
    expect(cli(["build", demo, "-o", a, "--jobs", "1"]).code).toBe(0);
    const env = { STEERCODE_SPAWN_AFTER: "2", STEERCODE_DEBUG: "1" };
    const r = cli(["build", demo, "-o", b, "--jobs", "2"], { env });
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/analysis: 1 worker\(s\) started after 2 main-thread chunk\(s\), \d+ of 133 beams analysed by them/);
    for (const f of readdirSync(a, { recursive: true }) as string[]) if (statSync(join(a, f)).isFile()) expect(readFileSync(join(b, f)).equals(readFileSync(join(a, f))), f).toBe(true);
    const v = cli(["verify", b, "--jobs", "2"], { env });
    expect(v.code, v.stdout + v.stderr).toBe(0);
    expect(v.stderr).toMatch(/analysis: 1 worker\(s\) started after 2 main-thread chunk\(s\)/);
  });

  // a machine of one core clamps --jobs 2 to 1: nothing to start there
  it.skipIf(availableParallelism() < 2)("workers started with the command (build, sweep) take a large job at once, are not started (build) or are stopped (sweep) for a small one, and change no byte", () => {
    const env = { STEERCODE_DEBUG: "1" };
    const same = (a: string, b: string) => {
      for (const f of readdirSync(a, { recursive: true }) as string[]) if (statSync(join(a, f)).isFile()) expect(readFileSync(join(b, f)).equals(readFileSync(join(a, f))), f).toBe(true);
    };
    const grid = (lim: number, step: number) => ({ kind: "azel", az: { from: -lim, to: lim, step }, el: { from: -lim, to: lim, step } });
    const panel32 = { lattice: { kind: "rectangular", columns: 32, rows: 32, dx: "0.5 lambda", dy: "0.5 lambda" } };
    // 32 × 32 × 625 beams: rough work 625 · 0.17 ms · 4^1.1 = 488 ms, over EARLY_WORK_MS (400)
    const big = writeScenario(baseScenario({ array: panel32, beams: grid(48, 4) }));
    const a = join(tempDir(), "a"), b = join(tempDir(), "b");
    expect(cli(["build", big, "-o", a, "--jobs", "1"]).code).toBe(0);
    const r = cli(["build", big, "-o", b, "--jobs", "2"], { env });
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/analysis: 1 worker\(s\) started after 0 main-thread chunk\(s\), \d+ of 625 beams analysed by them; the workers started with the command: taken at once \(rough work 488 ms/);
    same(a, b);
    // 32 × 32 × 441 beams: 344 ms, under it: build starts no worker with the command (a
    // waiting worker slows a small build's cold start; analysis-pool.ts, EARLY_WORK_MS)
    const mid = writeScenario(baseScenario({ array: panel32, beams: grid(50, 5) }));
    const e = join(tempDir(), "e"), f = join(tempDir(), "f");
    expect(cli(["build", mid, "-o", e, "--jobs", "1"]).code).toBe(0);
    const m = cli(["build", mid, "-o", f, "--jobs", "2"], { env });
    expect(m.code, m.stderr).toBe(0);
    expect(m.stderr).toMatch(/; no worker started with the command \(rough work 344 ms, from 400 ms\)/);
    same(e, f);
    // a large build whose calibration file is wrong: exit 2, nothing written, no wait on the workers started for it
    const bad = writeScenario(baseScenario({ array: panel32, beams: grid(48, 4), calibration: "bad-cal.csv" }), { "bad-cal.csv": "element,phase_offset_deg,gain_offset_db\n0,abc,0\n" });
    const g = join(tempDir(), "g");
    const x = cli(["build", bad, "-o", g, "--jobs", "2"], { env });
    expect(x.code, x.stderr).toBe(2);
    expect(x.stderr).toMatch(/bad-cal\.csv, line 2, column phase_offset_deg: expected a number, got "abc"/);
    expect(existsSync(g)).toBe(false);
    // the demo, 133 beams of 16 × 16: 23 ms
    const demo = join(import.meta.dirname, "..", "..", "fixtures", "demo", "scenario.json");
    const c = join(tempDir(), "c"), d = join(tempDir(), "d");
    expect(cli(["build", demo, "-o", c, "--jobs", "1"]).code).toBe(0);
    const q = cli(["build", demo, "-o", d, "--jobs", "2"], { env });
    expect(q.code, q.stderr).toBe(0);
    expect(q.stderr).toMatch(/analysis: no worker started .*; no worker started with the command \(rough work 23 ms/);
    same(c, d);
    // a sweep starts its workers as it begins and counts every part: 5 phase depths × 121 beams of 32 × 32 = 473 ms
    const sweepScenario = writeScenario(baseScenario({ array: panel32, beams: grid(50, 10) }));
    const sa = join(tempDir(), "sa"), sb = join(tempDir(), "sb");
    expect(cli(["sweep", sweepScenario, "-o", sa, "--phase-bits", "3..7", "--jobs", "1"]).code).toBe(0);
    const w = cli(["sweep", sweepScenario, "-o", sb, "--phase-bits", "3..7", "--jobs", "2"], { env });
    expect(w.code, w.stderr).toBe(0);
    expect(w.stderr).toMatch(/analysis: 1 worker\(s\) started after 0 main-thread chunk\(s\).*taken at once \(rough work 473 ms/);
    for (const f of ["sweep.csv", "sweep.json"]) expect(readFileSync(join(sb, f)).equals(readFileSync(join(sa, f))), f).toBe(true);
    // and a small sweep stops them: 1 phase depth × 121 beams = 95 ms
    const sc = join(tempDir(), "sc");
    const ws = cli(["sweep", sweepScenario, "-o", sc, "--phase-bits", "4", "--jobs", "2"], { env });
    expect(ws.code, ws.stderr).toBe(0);
    expect(ws.stderr).toMatch(/the workers started with the command: stopped \(rough work 95 ms/);
  });
});

describe("tiny arrays", () => {
  it("two elements at broadside have no sidelobe in visible space: empty PSL cells, n/a in the summary, a report that still renders", () => {
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "uv", u: { from: 0, to: 0, step: 1 }, v: { from: 0, to: 0, step: 1 } },
    }));
    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out, "--json"]);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.summary.psl_db.median).toBeNull();
    const row = readFileSync(join(out, "beams.csv"), "utf8").trim().split("\n")[1]!.split(",");
    expect(row[9]).toBe(""); // psl_ideal_db
    expect(row[10]).toBe(""); // psl_db
    expect(cli(["report", out]).code).toBe(0); // the page itself: test/cli/report.test.ts
  });
});

describe("printed theory fits the quantizer and the part; negative gain loss is explained where printed (issue 8 items 3, 4)", () => {
  it("a clipped, randomized build: console, --json and report say why gain loss is negative and print stochastic theory, n/a for the lobe", () => {
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 10, rows: 10, dx: "0.5 lambda", dy: "0.5 lambda" } },
      taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 },
      attenuator: { bits: 2, step: "0.5 dB" },
      phaseShifter: { bits: 4 },
      quantizer: { method: "randomized", seed: 2 },
    }));
    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/note: gain loss is negative on 3 of 3 beam\(s\): it is referred to the tapered ideal/);
    expect(r.stdout).toMatch(/\d+ element\(s\) are clipped: .* the same clipping puts [\d.]+ dB rms into the amplitude error/);
    // derived (README): stochastic rounding, LSB/√6 = 22.5°/√6 = 9.186°
    expect(r.stdout).toMatch(/rms phase error +9\.186 deg +LSB\/√6; derived/);
    expect(r.stdout).toMatch(/periodic quantisation lobe +n\/a +randomized rounding leaves no periodic error/);
    expect(r.stdout).not.toMatch(/LSB\/√12|step\/√12;/);
    const j = cli(["build", s, "-o", out, "--json"]);
    expect(JSON.parse(j.stdout).notes[0]).toMatch(/^gain loss is negative on 3 of 3 beam\(s\)/);
    const m = JSON.parse(readFileSync(join(out, "manifest.json"), "utf8"));
    expect(m.extra.theory.rmsPhaseErrorDeg.formula).toBe("LSB/√6");
    expect(m.extra.theory.quantizationLobeDb.value).toBeNull();
    const html = join(tempDir(), "r.html");
    expect(cli(["report", out, "-o", html]).code).toBe(0);
    const page = readFileSync(html, "utf8");
    expect(page).toMatch(/Note: gain loss is negative on 3 of 3 beam\(s\)/);
    expect(page).toMatch(/LSB\/√6/);
  });
});
