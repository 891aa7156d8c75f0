/**
 * The theory estimates `sweep` writes beside its measurements (sweep.csv, sweep.json) and
 * prints, recomputed in numpy/scipy from their stated formulas (test/fixtures/scipy/
 * sweep_theory.py names each source: Mailloux ch. 7, LSB/√12 and LSB/√6, 10·log10(2^(−2B)),
 * the random-error floor Σa_n²σ_n²/|Σa_n|²), for several phase bits, attenuator steps
 * (with and without clipping) and both rounding quantizers.
 */
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect } from "vitest";
import { cli, tempDir, writeScenario } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";

const SCRIPT = join(import.meta.dirname, "..", "fixtures", "scipy", "sweep_theory.py");
const KEYS = ["theory_gain_loss_db", "theory_rms_phase_error_deg", "theory_quantization_lobe_db", "theory_random_floor_db", "theory_rms_amp_error_db", "theory_atten_gain_change_db", "theory_expected_gain_loss_db"] as const;

describe("sweep: theory beside measurement against scipy", () => {
  itWith([TOOLS.scipy], "8 × 6 Taylor −30 dB, one element off, 2–5 bits × 0.25/1/3 dB steps (clipping at 1 and 3 dB), nearest and randomized", () => {
    const doc = {
      format: "steercode-scenario/1",
      frequency: "10 GHz",
      array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "0.5 lambda", dy: "0.5 lambda" }, disabled: [3] },
      beams: { kind: "uv", u: { from: -0.4, to: 0.4, step: 0.4 }, v: { from: 0, to: 0, step: 1 } },
      phaseShifter: { bits: 4 },
      attenuator: { bits: 4, step: "0.5 dB" },
      taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 },
      quantizer: { method: "nearest" },
      word: { bits: 16, off: 0, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 8, width: 8 }] },
    };
    const s = writeScenario(doc);
    const out = join(tempDir(), "sw");
    const r = cli(["sweep", s, "-o", out, "--phase-bits", "2..5", "--atten-step", "0.25,1,3", "--quantizer", "nearest,randomized"]);
    expect(r.code, r.stderr).toBe(0);
    const py = spawnSync("/usr/bin/python3", [SCRIPT, s, join(out, "sweep.json")], { encoding: "utf8", timeout: 60_000 });
    expect(py.status, py.stderr).toBe(0);
    const expected = JSON.parse(py.stdout).rows as (Record<string, number | null> | null)[];
    const json = JSON.parse(readFileSync(join(out, "sweep.json"), "utf8")).rows as Record<string, number | string | null>[];
    const csv = parse(readFileSync(join(out, "sweep.csv")), { columns: true }) as Record<string, string>[];
    expect(json.length).toBe(24);
    let clippedRows = 0;
    json.forEach((row, i) => {
      const e = expected[i]!;
      const at = `${row.phase_bits} bits, ${row.atten_step_db} dB, ${row.quantizer}`;
      if ((row.clipped_elements as number) > 0) clippedRows++;
      for (const k of KEYS) {
        if (e[k] === null) expect(row[k], `${at}: ${k}`).toBeNull();
        else expect(row[k] as number, `${at}: ${k}`).toBeCloseTo(e[k]!, 6);
      }
      // the attenuator's error is beam-independent (ideal parts), so numpy's rms of the actual per-element
      // rounding is also what the analysis measures over every beam (README "Theory beside measurement")
      if (e.theory_rms_amp_error_db !== null) expect(row.rms_amp_error_db as number, `${at}: measured rms amplitude error`).toBeCloseTo(e.theory_rms_amp_error_db!, 6);
      // sweep.csv carries the phase-quantisation ones, 6 decimals; an n/a is an empty cell
      const c = csv[i]!;
      expect(c.quantizer).toBe(row.quantizer);
      for (const k of ["theory_gain_loss_db", "theory_rms_phase_error_deg", "theory_quantization_lobe_db"] as const)
        if (e[k] === null) expect(c[k], `${at}: ${k}`).toBe("");
        else expect(Number(c[k]), `${at}: ${k}`).toBeCloseTo(e[k]!, 5);
    });
    expect(clippedRows).toBeGreaterThan(0); // the case the floor's attenuator share depends on

    // the printed table's theory beside the measured median gain loss is the expected loss, phase term + attenuator
    // term (the measured loss holds both), not the phase term alone: numpy's value to the 3 printed decimals
    const printed = new Map<string, string[]>();
    for (const line of r.stdout.split("\n")) {
      const f = line.trim().split(/\s+/);
      if (f.length === 11 && /^\d+$/.test(f[0]!) && (f[2] === "nearest" || f[2] === "randomized")) printed.set(`${f[0]}|${Number(f[1])}|${f[2]}`, f);
    }
    expect(printed.size).toBe(24);
    let attenMatters = 0;
    json.forEach((row, i) => {
      const e = expected[i]!;
      const f = printed.get(`${row.phase_bits}|${row.atten_step_db}|${row.quantizer}`)!;
      expect(Number(f[8]), `${row.phase_bits} bits, ${row.atten_step_db} dB, ${row.quantizer}: printed theory beside the loss`).toBeCloseTo(e.theory_expected_gain_loss_db!, 3);
      if (Math.abs(e.theory_expected_gain_loss_db! - e.theory_gain_loss_db!) > 0.01) attenMatters++;
    });
    expect(attenMatters).toBeGreaterThan(0); // rows where the phase term alone would be visibly wrong
    expect(r.stdout).toMatch(/theory beside the gain loss: phase-quantisation term \+ attenuator term/);

    // sweep.svg draws the floor per swept step and quantizer (it depends on the step; the scenario's own
    // 0.5 dB is not swept here): one dashed curve per (step, quantizer), its points on one affine scale
    // with scipy's values (y pixel = α + β·dB)
    const svg = readFileSync(join(out, "sweep.svg"), "utf8");
    const groups = [...new Set(json.map((r) => `${r.atten_step_db}|${r.quantizer}`))];
    /** the curves dashed `dash`, one per (step, quantizer) in row order, against numpy's `key` on one affine scale */
    const curvesOnScale = (dash: string, key: (typeof KEYS)[number]) => {
      const curves = [...svg.matchAll(new RegExp(`<path d="([^"]+)"[^>]*stroke-dasharray="${dash}"`, "g"))].map((m) => [...m[1]!.matchAll(/[ML]([\d.]+) ([\d.]+)/g)].map((p) => Number(p[2])));
      expect(curves.length).toBe(6);
      const ys: number[] = [], vs: number[] = [];
      groups.forEach((g, k) => {
        const idx = json.map((r, i) => [r, i] as const).filter(([r]) => `${r.atten_step_db}|${r.quantizer}` === g).sort(([a], [b]) => (a.phase_bits as number) - (b.phase_bits as number));
        expect(curves[k]!.length).toBe(idx.length);
        idx.forEach(([, i], j) => {
          ys.push(curves[k]![j]!);
          vs.push(expected[i]![key]!);
        });
      });
      onOneScale(ys, vs);
    };
    curvesOnScale("8 3 2 3", "theory_random_floor_db");
    // the gain-loss panel draws the expected loss (phase + attenuator term) per swept step and quantizer the same way
    curvesOnScale("5 2 1 2", "theory_expected_gain_loss_db");
  });
});

/** y pixels of an SVG curve against values: one affine map y = α + β·value, β < 0 (higher value higher on the page), to the SVG's 2-decimal pixels */
function onOneScale(ys: number[], vs: number[]): void {
  const n = ys.length, mv = vs.reduce((a, b) => a + b) / n, my = ys.reduce((a, b) => a + b) / n;
  const beta = vs.reduce((s, v, i) => s + (v - mv) * (ys[i]! - my), 0) / vs.reduce((s, v) => s + (v - mv) ** 2, 0);
  expect(beta).toBeLessThan(0);
  for (let i = 0; i < n; i++) expect(Math.abs(ys[i]! - (my + beta * (vs[i]! - mv))), `point ${i}`).toBeLessThan(0.02);
}
