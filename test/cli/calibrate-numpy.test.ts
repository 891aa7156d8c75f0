/**
 * `steercode calibrate --method rev` against a range simulated in numpy, apart from
 * steercode (test/fixtures/numpy/range_sim.py: invented arrays and offsets, Gaussian
 * noise on every reading; nothing here is a measurement).
 *
 * The noise bound (derived, README "From range readings to cal.csv", Accuracy): with
 * reading noise σ dB, M equally spaced codes and an element share s = |e_n|/|E0|, the
 * readings in dB are a sinusoid of amplitude (20/ln10)·s whose coefficients have 1σ
 * σ·√(2/M), so each component of x = e_n/E0 has 1σ σ_x = σ·√(2/M)·(ln10/20), the phase
 * error is σ_x/s rad and the gain error (20/ln10)·σ_x/s dB. A channel with s ≲ 4σ_x
 * cannot be told from no field (with no field |x̂|/σ_x is Rayleigh distributed).
 */
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect } from "vitest";
import { cli, tempDir } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";

const SIM = join(import.meta.dirname, "..", "fixtures", "numpy", "range_sim.py");

interface Truth {
  ids: number[];
  phaseDeg: number[];
  gainDb: number[];
  share: number[];
  codes: number;
}
interface El {
  element: number;
  phaseDeg: number;
  gainDb: number;
  phaseStdDeg: number | null;
  gainStdDb: number | null;
  flags: string[];
  advice: string[];
}

function simulate(opts: Record<string, unknown>, probeArgs: string[] = []): { truth: Truth; els: El[]; calCsv: string; stdout: string } {
  const d = tempDir("steercode-range-");
  const s = spawnSync("/usr/bin/python3", [SIM, d, JSON.stringify(opts)], { encoding: "utf8", timeout: 60_000 });
  expect(s.status, s.stderr).toBe(0);
  const r = cli(["calibrate", join(d, "scenario.json"), "--data", join(d, "range.csv"), "--method", "rev", "-o", join(d, "cal.csv"), "--json", ...probeArgs]);
  expect(r.code, r.stderr).toBe(0);
  const t = cli(["calibrate", join(d, "scenario.json"), "--data", join(d, "range.csv"), "--method", "rev", "-o", join(d, "cal.csv"), ...probeArgs]);
  return { truth: JSON.parse(readFileSync(join(d, "truth.json"), "utf8")), els: JSON.parse(r.stdout).frequencies[0].elements, calCsv: readFileSync(join(d, "cal.csv"), "utf8"), stdout: t.stdout + t.stderr };
}

const wrap = (d: number) => d - 360 * Math.round(d / 360);

describe("calibrate (rev) on a numpy-simulated range", () => {
  itWith([TOOLS.numpy], "a dead channel and one at the noise floor are flagged as not measured, with no uncertainty claimed", () => {
    // 8 × 8, σ = 0.3 dB: element 11 has no field at all; element 21 is 20 dB down, its share at the
    // noise floor by the formula above
    const sigma = 0.3;
    const { truth, els, calCsv, stdout } = simulate({ noise: sigma, seed: 3, dead: [10], weak: [20], weak_db: -20 });
    const sx = sigma * Math.sqrt(2 / truth.codes) * (Math.LN10 / 20);
    expect(truth.share[10]).toBe(0);
    expect(truth.share[20]! / sx).toBeLessThan(1.5); // cannot be told from no field
    for (const id of [11, 21]) {
      const e = els.find((x) => x.element === id)!;
      expect(e.flags, `element ${id}`).toContain("dead");
      expect(e.advice.join(" "), `element ${id}`).toMatch(/cannot tell it from no field/);
      // a 1σ for a phase that was not measured would be untrue (before: 25–60° claimed for a channel with no field)
      expect(e.phaseStdDeg, `element ${id}`).toBeNull();
      expect(e.gainStdDb, `element ${id}`).toBeNull();
    }
    expect(calCsv).toMatch(/# flagged: .*element 11 dead.*element 21 dead/);
    expect(stdout).toMatch(/warning: element 21: its fitted field/);
    // channels well above the floor are not flagged: their share is > 6 σ_x
    for (const e of els) if (truth.share[truth.ids.indexOf(e.element)]! > 6 * sx) expect(e.flags, `element ${e.element}`).not.toContain("dead");
  });

  itWith([TOOLS.numpy], "near-field probe and measured non-ideal states: every channel within 4.5σ of the noise bound, and the reported 1σ honest", () => {
    const sigma = 0.02;
    const { truth, els } = simulate({ noise: sigma, seed: 1, states: true, probe: ["near", 0.01, -0.02, 0.3] }, ["--probe-position", "0.01,-0.02,0.3"]);
    const sx = sigma * Math.sqrt(2 / truth.codes) * (Math.LN10 / 20);
    const i = (id: number) => truth.ids.indexOf(id);
    // offsets are defined up to a common phase and gain: remove the mean error
    const dp = els.map((e) => wrap(e.phaseDeg - truth.phaseDeg[i(e.element)]!)), dg = els.map((e) => e.gainDb - truth.gainDb[i(e.element)]!);
    const mp = dp.reduce((a, b) => a + b) / dp.length, mg = dg.reduce((a, b) => a + b) / dg.length;
    const zRep: number[] = [], gRep: number[] = [];
    els.forEach((e, j) => {
      expect(e.flags, `element ${e.element}`).toEqual([]);
      const s = truth.share[i(e.element)]!;
      expect(Math.abs(dp[j]! - mp), `element ${e.element} phase`).toBeLessThan((4.5 * sx * 180) / Math.PI / s);
      expect(Math.abs(dg[j]! - mg), `element ${e.element} gain`).toBeLessThan((4.5 * 20 * sx) / Math.LN10 / s);
      zRep.push((dp[j]! - mp) / e.phaseStdDeg!);
      gRep.push((dg[j]! - mg) / e.gainStdDb!);
    });
    // the tool's per-element 1σ: the errors it claims, measured against the truth (rms of error/1σ near 1)
    const rms = (a: number[]) => Math.sqrt(a.reduce((s, x) => s + x * x, 0) / a.length);
    for (const z of [zRep, gRep]) {
      expect(rms(z)).toBeGreaterThan(0.6);
      expect(rms(z)).toBeLessThan(1.6);
    }
  });

  itWith([TOOLS.numpy], "four codes (0, 3, 7, 12): the per-element 1σ is honest (the noise is pooled over the elements, not taken from one dof each)", () => {
    // with four readings an element's own residual has one degree of freedom: its 1σ alone erred by
    // more than 3× on a fifth of the elements (up to 6000×) before the noise was pooled
    const z: number[] = [];
    for (const seed of [1, 2, 3]) {
      const { truth, els } = simulate({ noise: 0.02, seed, codes: [0, 3, 7, 12] });
      const i = (id: number) => truth.ids.indexOf(id);
      const ok = els.filter((e) => e.flags.length === 0);
      expect(ok.length).toBeGreaterThan(56);
      const dp = ok.map((e) => wrap(e.phaseDeg - truth.phaseDeg[i(e.element)]!));
      const dg = ok.map((e) => e.gainDb - truth.gainDb[i(e.element)]!);
      const mp = dp.reduce((a, b) => a + b) / dp.length, mg = dg.reduce((a, b) => a + b) / dg.length;
      ok.forEach((e, j) => z.push((dp[j]! - mp) / e.phaseStdDeg!, (dg[j]! - mg) / e.gainStdDb!));
    }
    // Gaussian errors: |z| > 3 on 0.27 % (about 1 of these ~380); allow 2 %
    expect(z.filter((v) => Math.abs(v) > 3).length / z.length).toBeLessThan(0.02);
    const rms = Math.sqrt(z.reduce((s, v) => s + v * v, 0) / z.length);
    expect(rms).toBeGreaterThan(0.7);
    expect(rms).toBeLessThan(1.4);
  });

  itWith([TOOLS.numpy], "fields that largely cancel at the probe: more than 16 undecided roots, and the warning says the sum check was not tried", () => {
    // seed 4: |E0| small (shares up to 0.57), so a third of the roots are undecided (README "Which REV root")
    const { truth, els, calCsv, stdout } = simulate({ noise: 0.02, seed: 4 });
    expect(Math.max(...truth.share)).toBeGreaterThan(0.5);
    const undecided = els.filter((e) => e.flags.includes("ambiguous-root")).length;
    expect(undecided).toBeGreaterThan(16);
    expect(calCsv).toMatch(new RegExp(`# warning: ${undecided} enabled elements' root choices are undecided, more than the 16 the sum check .* so it was not tried`));
    expect(stdout).toMatch(/so it was not tried/);
  });
});
