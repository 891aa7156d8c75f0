/**
 * The optimized quantizer end to end: the same bytes with --jobs 1 and 2 and from run
 * to run, verify recomputes them, the per-beam record in beams.csv and the manifest, the
 * printed grid-wide gain, and the sweep's side-by-side comparison.
 */
import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";

const OPT_SCENARIO = baseScenario({
  frequency: ["9.5 GHz", "10.5 GHz"],
  array: { lattice: { kind: "rectangular", columns: 8, rows: 3, dx: "0.5 lambda", dy: "0.5 lambda" }, disabled: [4] },
  beams: { kind: "uv", u: { from: -0.4, to: 0.5, step: 0.3 }, v: { from: 0, to: 0.2, step: 0.2 } },
  phaseShifter: { bits: 3 },
  taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
  quantizer: { method: "optimized", objective: "psl", seed: 7 },
});

function files(dir: string, sub = ""): string[] {
  return readdirSync(join(dir, sub), { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(dir, join(sub, e.name)) : [join(sub, e.name)])).sort();
}

describe("optimized builds", () => {
  it("are byte-identical with --jobs 1 and --jobs 2 and from run to run; verify recomputes the tables", () => {
    const s = writeScenario(OPT_SCENARIO);
    const a = join(tempDir(), "a"), b = join(tempDir(), "b"), c = join(tempDir(), "c");
    const ra = cli(["build", s, "-o", a, "--jobs", "1"]);
    expect(ra.code, ra.stderr).toBe(0);
    expect(cli(["build", s, "-o", b, "--jobs", "2"]).code).toBe(0);
    expect(cli(["build", s, "-o", c, "--jobs", "2"]).code).toBe(0);
    expect(files(b)).toEqual(files(a));
    for (const f of files(a)) {
      expect(readFileSync(join(b, f)).equals(readFileSync(join(a, f))), f).toBe(true);
      expect(readFileSync(join(c, f)).equals(readFileSync(join(a, f))), f).toBe(true);
    }
    const v = cli(["verify", a]);
    expect(v.code, v.stdout + v.stderr).toBe(0);
    // the tables do not depend on the analysis either
    const d = join(tempDir(), "d");
    expect(cli(["build", s, "-o", d, "--no-analysis"]).code).toBe(0);
    expect(readFileSync(join(d, "table.bin")).equals(readFileSync(join(a, "table.bin")))).toBe(true);
    expect(JSON.parse(readFileSync(join(d, "manifest.json"), "utf8")).optimized).toEqual(JSON.parse(readFileSync(join(a, "manifest.json"), "utf8")).optimized);
  });

  it("records per beam what it achieved (beams.csv extra columns, manifest) and prints the grid-wide gain", () => {
    const s = writeScenario(OPT_SCENARIO);
    const out = join(tempDir(), "o");
    const r = cli(["build", s, "-o", out]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/optimized quantizer \(objective PSL, gain loss ≤ nearest's \+ 0\.1 dB, pointing ≤ nearest's \+ 0\.01°, seed 7\)/);
    expect(r.stdout).toMatch(/beams improved\s+\d+ of 16/);
    expect(r.stdout).toMatch(/worst PSL over the grid\s+-\d+\.\d\d dB nearest → -\d+\.\d\d dB optimized/);
    const rows = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Record<string, string>[];
    expect(Object.keys(rows[0]!).slice(-4)).toEqual(["nearest_psl_db", "nearest_gain_loss_db", "nearest_pointing_error_deg", "changed_elements"]);
    const m = JSON.parse(readFileSync(join(out, "manifest.json"), "utf8"));
    expect(m.quantizer).toEqual({ method: "optimized", seed: 7, objective: "psl", maxGainLossDb: null, defaultExtraLossDb: 0.1, pointingAllowanceDeg: 0.01 });
    expect(m.optimized.perFrequency.length).toBe(2);
    let improved = 0;
    rows.forEach((row, i) => {
      const fi = Math.floor(i / 8), b = i % 8;
      const pf = m.optimized.perFrequency[fi];
      // never worse than nearest, both limits held (contract), on the analysis beams.csv reports
      expect(Number(row.psl_db)).toBeLessThanOrEqual(Number(row.nearest_psl_db));
      expect(Number(row.gain_loss_db)).toBeLessThanOrEqual(Number(row.nearest_gain_loss_db) + 0.1 + 1e-4);
      expect(Number(row.pointing_error_deg)).toBeLessThanOrEqual(Number(row.nearest_pointing_error_deg) + 0.01 + 1e-6);
      // the manifest's record is the same analysis as beams.csv
      expect(pf.pslAfterDb[b]).toBeCloseTo(Number(row.psl_db), 3);
      expect(pf.pslBeforeDb[b]).toBeCloseTo(Number(row.nearest_psl_db), 3);
      expect(pf.gainLossAfterDb[b]).toBeCloseTo(Number(row.gain_loss_db), 4);
      expect(pf.changedElements[b]).toBe(Number(row.changed_elements));
      if (Number(row.changed_elements) > 0) improved++;
    });
    expect(improved).toBeGreaterThan(8);
    expect(m.optimized.summary.improved).toBe(improved);
  });

  it("a nearest build keeps the v1 beams.csv columns and manifest keys", () => {
    const s = writeScenario(baseScenario());
    const out = join(tempDir(), "n");
    expect(cli(["build", s, "-o", out]).code).toBe(0);
    expect(readFileSync(join(out, "beams.csv"), "utf8").split("\n")[0]).toBe("frequency_hz,beam,az_deg,el_deg,u,v,peak_u,peak_v,pointing_error_deg,psl_ideal_db,psl_db,sll_rise_db,gain_loss_db,rms_phase_error_deg,rms_amp_error_db,clipped");
    const m = JSON.parse(readFileSync(join(out, "manifest.json"), "utf8"));
    expect(m.optimized).toBeUndefined();
    expect(m.quantizer).toEqual({ method: "nearest", seed: null });
  });

  it("sweep --quantizer nearest,randomized,optimized: side by side per bit depth; optimized never has a worse grid PSL than nearest", () => {
    const s = writeScenario({ ...OPT_SCENARIO, frequency: "10 GHz" });
    const out = join(tempDir(), "sw");
    const r = cli(["sweep", s, "-o", out, "--phase-bits", "3,4", "--quantizer", "nearest,randomized,optimized"]);
    expect(r.code, r.stderr).toBe(0);
    const table = r.stdout.split("\n").filter((l) => /^\s+\d+\s/.test(l)).map((l) => l.trim().split(/\s+/).slice(0, 3).join(" "));
    expect(table).toEqual(["3 0.5 nearest", "3 0.5 randomized", "3 0.5 optimized", "4 0.5 nearest", "4 0.5 randomized", "4 0.5 optimized"]);
    const rows = parse(readFileSync(join(out, "sweep.csv")), { columns: true }) as Record<string, string>[];
    for (const bits of ["3", "4"]) {
      const n = rows.find((x) => x.phase_bits === bits && x.quantizer === "nearest")!;
      const o = rows.find((x) => x.phase_bits === bits && x.quantizer === "optimized")!;
      expect(Number(o.psl_db_max)).toBeLessThanOrEqual(Number(n.psl_db_max));
      expect(Number(o.sll_rise_db_median)).toBeLessThanOrEqual(Number(n.sll_rise_db_median));
    }
    expect(JSON.parse(readFileSync(join(out, "sweep.json"), "utf8")).seed).toBe(7);
  });
});
