import { readFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { attenBitsFor } from "../../src/core/sweep.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";

type Row = Record<string, string>;
function sweep(doc: Record<string, unknown>, args: string[], files: Record<string, string> = {}): Row[] {
  const s = writeScenario(doc, files);
  const out = join(tempDir(), "sw");
  const r = cli(["sweep", s, "-o", out, ...args]);
  expect(r.code, r.stderr).toBe(0);
  return parse(readFileSync(join(out, "sweep.csv")), { columns: true }) as Row[];
}

describe("sweep", () => {
  it("keeps the interface columns (plus quantizer) and the theory columns equal the published formulas", () => {
    const rows = sweep(baseScenario(), ["--phase-bits", "3..5", "--atten-step", "0.25,0.5,1"]);
    expect(Object.keys(rows[0]!)).toEqual(["phase_bits", "atten_step_db", "atten_bits", "beams", "psl_db_max", "sll_rise_db_median", "sll_rise_db_p95", "sll_rise_db_max", "pointing_error_deg_rms", "pointing_error_deg_max", "gain_loss_db_median", "gain_loss_db_max", "rms_phase_error_deg", "rms_amp_error_db", "theory_gain_loss_db", "theory_rms_phase_error_deg", "theory_quantization_lobe_db", "quantizer"]);
    expect(rows.length).toBe(9);
    for (const r of rows) {
      const B = Number(r.phase_bits);
      const x = Math.PI / 2 ** B;
      // Mailloux ch. 7 (from memory): [sin(π/2^B)/(π/2^B)]²; common practice: LSB/√12; 2^(−2B)
      expect(Number(r.theory_gain_loss_db)).toBeCloseTo(-10 * Math.log10((Math.sin(x) / x) ** 2), 5);
      expect(Number(r.theory_rms_phase_error_deg)).toBeCloseTo(360 / 2 ** B / Math.sqrt(12), 5);
      // issue 8 item 3: exactly 10·log10(2^(−2B)) = −6.0206·B dB (not −6.02·B, which is 0.0006·B dB off)
      expect(Number(r.theory_quantization_lobe_db)).toBeCloseTo(10 * Math.log10(2 ** (-2 * B)), 5);
      expect(Number(r.theory_quantization_lobe_db)).toBeCloseTo(-6.0206 * B, 3);
    }
    // the attenuator keeps its 31.5 dB range (6 bits × 0.5 dB): 0.25 dB needs 7 bits (127 steps ≥ 126);
    // 1 dB needs 6, since 5 bits reach only 31 dB
    expect(rows.filter((r) => r.atten_step_db === "0.25").every((r) => r.atten_bits === "7")).toBe(true);
    expect(rows.filter((r) => r.atten_step_db === "1").every((r) => r.atten_bits === "6")).toBe(true);
    expect(attenBitsFor(31.5, 0.5)).toBe(6);
  });

  it("calibration spread over 360°: nearest within 3% of LSB/√12 and 0.03 dB of sinc²; randomized within 3% of LSB/√6 and 0.06 dB of sinc⁴ (derived), for every bit depth", () => {
    // common practice: spread insertion phases decorrelate the rounding errors
    const r = mulberry32(2026);
    const n = 24 * 24;
    const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: n }, (_, i) => `${i},${(r() * 360).toFixed(3)},0`).join("\n") + "\n";
    const rows = sweep(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 24, rows: 24, dx: "0.5 lambda", dy: "0.5 lambda" } },
      calibration: "cal.csv",
      beams: { kind: "azel", az: { from: -45, to: 45, step: 15 }, el: { from: -30, to: 30, step: 15 } },
    }), ["--phase-bits", "3..6", "--quantizer", "nearest,randomized"], { "cal.csv": cal });
    expect(rows.length).toBe(8);
    for (const row of rows) {
      const B = Number(row.phase_bits);
      const x = Math.PI / 2 ** B;
      const randomized = row.quantizer === "randomized";
      // common practice / Mailloux (nearest); derived for stochastic rounding: E[e²] = ∫f(1−f)df = LSB²/6, |E[e^{jε}]|² = sinc⁴
      expect(Number(row.theory_rms_phase_error_deg)).toBeCloseTo(360 / 2 ** B / Math.sqrt(randomized ? 6 : 12), 5);
      expect(Number(row.theory_gain_loss_db)).toBeCloseTo(-10 * Math.log10((Math.sin(x) / x) ** (randomized ? 4 : 2)), 5);
      expect(Math.abs(Number(row.rms_phase_error_deg) / Number(row.theory_rms_phase_error_deg) - 1)).toBeLessThan(0.03);
      expect(Math.abs(Number(row.gain_loss_db_median) - Number(row.theory_gain_loss_db))).toBeLessThan(randomized ? 0.06 : 0.03);
      // randomized rounding has no periodic quantisation lobe: the cell is empty (n/a), not the nearest-rounding value
      expect(row.theory_quantization_lobe_db === "").toBe(randomized);
    }
  });

  it("periodic errors (λ/2 line, no calibration, −45 dB Taylor, fine scan): quantisation lobes at the sawtooth level 1/(2^B−1)², lowered by the randomized quantizer", () => {
    // Mailloux ch. 7 / Miller 1964 (from memory): periodic sawtooth error → lobe ≈ 2^(−2B), exactly 1/(2^B − 1)²;
    // Smith & Guo 1983: randomised rounding breaks the periodicity up.
    const doc = baseScenario({
      array: { lattice: { kind: "rectangular", columns: 64, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "uv", u: { from: 0.005, to: 0.3, step: 0.0025 }, v: { from: 0, to: 0, step: 1 } },
      attenuator: { bits: 8, step: "0.25 dB" },
      taper: { kind: "taylor", sidelobe: "-45 dB", nbar: 6 },
      quantizer: { method: "nearest", seed: 11 },
    });
    const s = writeScenario(doc);
    for (const B of [3, 4]) {
      const saw = 20 * Math.log10(1 / (2 ** B - 1));
      const psl = (method: string) => {
        const out = join(tempDir(), "b");
        const d = JSON.parse(readFileSync(s, "utf8"));
        d.phaseShifter = { bits: B };
        d.quantizer = { method, seed: 11 };
        const p = writeScenario(d);
        expect(cli(["build", p, "-o", out, "--no-analysis"]).code).toBe(0);
        expect(cli(["build", p, "-o", out]).code).toBe(0);
        const rows = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Row[];
        const v = rows.map((r) => Number(r.psl_db)).sort((a, b) => a - b);
        return { median: v[Math.floor(v.length / 2)]!, max: v[v.length - 1]! };
      };
      const near = psl("nearest");
      const rand = psl("randomized");
      expect(Math.abs(near.median - saw)).toBeLessThan(1.0);
      expect(near.max).toBeGreaterThan(10 * Math.log10(2 ** (-2 * B)));
      expect(rand.median).toBeLessThan(near.median - 1.5);
      expect(rand.max).toBeLessThan(near.max - 1);
    }
  });

  it("--quantizer nearest,randomized compares both on the same grid; the seed is recorded", () => {
    const s = writeScenario(baseScenario({ quantizer: { method: "nearest", seed: 99 } }));
    const out = join(tempDir(), "sw");
    expect(cli(["sweep", s, "-o", out, "--phase-bits", "3,5", "--quantizer", "nearest,randomized"]).code).toBe(0);
    const rows = parse(readFileSync(join(out, "sweep.csv")), { columns: true }) as Row[];
    expect(rows.map((r) => `${r.phase_bits}/${r.quantizer}`)).toEqual(["3/nearest", "5/nearest", "3/randomized", "5/randomized"]);
    expect(JSON.parse(readFileSync(join(out, "sweep.json"), "utf8")).seed).toBe(99);
    expect(readFileSync(join(out, "sweep.svg"), "utf8")).toMatch(/Mailloux/);
    const doc = JSON.parse(readFileSync(join(out, "sweep.json"), "utf8"));
    expect(doc.theorySources.nearest.theory_rms_phase_error_deg.formula).toBe("LSB/√12");
    expect(doc.theorySources.randomized.theory_rms_phase_error_deg.formula).toBe("LSB/√6");
    expect(doc.theorySources.randomized.theory_quantization_lobe_db.note).toMatch(/no periodic quantisation lobe/);
    expect(doc.rows.find((r: Row) => r.quantizer === "randomized").theory_quantization_lobe_db).toBeNull();
  });

  it("measured states fix the part: sweeping other bit depths is exit 2; its own depth works", () => {
    const ps = "code,phase_deg,gain_db\n" + Array.from({ length: 8 }, (_, p) => `${p},${p * 45 + (p % 3) - 1},0`).join("\n") + "\n";
    const s = writeScenario(baseScenario({ phaseShifter: { bits: 3, states: "ps.csv" } }), { "ps.csv": ps });
    const bad = cli(["sweep", s, "-o", join(tempDir(), "x"), "--phase-bits", "3..5"]);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/\/phaseShifter\/states: measured state tables fix the part/);
    expect(cli(["sweep", s, "-o", join(tempDir(), "y"), "--phase-bits", "3", "--atten-step", "0.5,1"]).code).toBe(0);
  });

  it("bad sweep options are exit 2 with the option named", () => {
    const s = writeScenario(baseScenario());
    for (const [args, re] of [
      [["--phase-bits", "8..3"], /--phase-bits: expected bit depths from 1 to 12 in increasing order/],
      [["--phase-bits", "three"], /--phase-bits: expected a range like 3\.\.8/],
      [["--atten-step", "0.5,-1"], /--atten-step: expected steps in dB greater than 0/],
      [["--quantizer", "dither"], /--quantizer: expected one or more of nearest, randomized, optimized/],
    ] as const) {
      const r = cli(["sweep", s, "-o", join(tempDir(), "x"), ...args]);
      expect(r.code).toBe(2);
      expect(r.stderr).toMatch(re);
    }
  });
});
