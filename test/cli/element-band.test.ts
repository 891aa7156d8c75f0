/** build / check / verify with an element pattern and a band (interface contract, Version 2). */
import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";

const DEG = Math.PI / 180;
const table = (() => {
  // element.csv: cos^1.2 θ sampled every 2° (θ) at four φ; 90° written as a −60 dB floor
  const lines = ["# invented for this test: cos^1.2 theta", "theta_deg,phi_deg,gain_db"];
  for (let t = 0; t <= 90; t += 2) for (const p of [0, 90, 180, 270]) lines.push(`${t},${p},${t === 90 ? -60 : (12 * Math.log10(Math.cos(t * DEG))).toFixed(6)}`);
  return lines.join("\n") + "\n";
})();

const doc = (over: Record<string, unknown> = {}) => baseScenario({
  frequency: ["28 GHz", "29 GHz"],
  array: { lattice: { kind: "rectangular", columns: 6, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" } },
  beams: { kind: "azel", az: { from: -50, to: 50, step: 25 }, el: { from: 0, to: 10, step: 10 } },
  element: { pattern: "table", file: "element.csv" },
  band: { from: "27 GHz", to: "29.5 GHz", step: "0.5 GHz" },
  ...over,
});

describe("build with an element pattern and a band", () => {
  it("writes scan_loss_db, squint.csv (table frequency × beam × band point) and the per-beam band summary; verify passes", () => {
    const s = writeScenario(doc(), { "element.csv": table });
    const out = join(tempDir(), "b");
    const r = cli(["build", s, "-o", out, "--jobs", "2"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/band 27\.0000 GHz … 29\.5000 GHz, 6 point\(s\) \(squint\.csv\)/);
    expect(r.stdout).toMatch(/pointing error \(deg\) .* played at \d+\.\d+ GHz/);
    const beams = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Record<string, string>[];
    expect(Object.keys(beams[0]!).at(-1)).toBe("scan_loss_db");
    // derived: scan loss = −10·log10(cos^1.2 θ); beam 0 is az −50°, el 0 → θ = 50°
    expect(Number(beams[0]!.scan_loss_db)).toBeCloseTo(-12 * Math.log10(Math.cos(50 * DEG)), 3);
    const sq = parse(readFileSync(join(out, "squint.csv")), { columns: true }) as Record<string, string>[];
    expect(Object.keys(sq[0]!)).toEqual(["table_frequency_hz", "beam", "frequency_hz", "peak_u", "peak_v", "pointing_error_deg", "gain_loss_db"]);
    expect(sq.length).toBe(2 * 10 * 6);
    // derived: a table played at its own frequency gives beams.csv's peak, pointing and gain loss
    for (const row of sq.filter((x) => x.frequency_hz === x.table_frequency_hz)) {
      const b = beams.find((x) => x.frequency_hz === row.table_frequency_hz && x.beam === row.beam)!;
      expect([row.peak_u, row.peak_v, row.pointing_error_deg, row.gain_loss_db]).toEqual([b.peak_u, b.peak_v, b.pointing_error_deg, b.gain_loss_db]);
    }
    const m = JSON.parse(readFileSync(join(out, "manifest.json"), "utf8"));
    expect(m.files["squint.csv"].sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(m.extra.band.perBeam).toHaveLength(20);
    expect(m.extra.summary.scan_loss_db.max).toBeGreaterThan(0);
    const worst = Math.max(...sq.map((x) => Number(x.pointing_error_deg)));
    expect(m.extra.band.worstPointingDeg.max).toBeCloseTo(worst, 6);
    const v = cli(["verify", out]);
    expect(v.code, v.stdout + v.stderr).toBe(0);
    const rp = cli(["report", out, "-o", join(out, "..", "r.html")]);
    expect(rp.code, rp.stderr).toBe(0);
    const html = readFileSync(join(out, "..", "r.html"), "utf8");
    expect(html).toMatch(/<section id="band"><h2>Across the band<\/h2>/);
    expect(html).toContain(`<td>${m.extra.band.worstPointingDeg.max.toFixed(4)} °</td>`);
  });

  it("a steep cosine element close to the horizon (cos^100 θ at θ = 89.97°–89.99° is below 1e-308): scan and gain loss from the formulas, no internal error", () => {
    // cos^100 θ underflows the doubles there: scan_loss_db was 10·log10(1/0) (exit 3, "Infinity"),
    // and gain_loss_db a ratio of two subnormal or zero products
    const dir = tempDir();
    const s = writeScenario(baseScenario({
      outputs: ["csv"], array: { lattice: { kind: "rectangular", columns: 6, rows: 4, dx: "0.5 lambda", dy: "0.5 lambda" } },
      beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "cosine", exponent: 100 },
      band: { from: "9.9 GHz", to: "10.1 GHz", step: "0.1 GHz" },
    }), { "beams.csv": "az_deg,el_deg\n89.99,0\n89.97,10\n60,0\n" }, dir);
    const out = join(dir, "b");
    const r = cli(["build", s, "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    const beams = parse(readFileSync(join(out, "beams.csv")), { columns: true }) as Record<string, string>[];
    const codes = parse(readFileSync(join(out, "codes.csv")), { columns: true }) as Record<string, string>[];
    const sq = parse(readFileSync(join(out, "squint.csv")), { columns: true }) as Record<string, string>[];
    const lam = 299792458 / 10e9;
    // |AF| at the commanded direction from codes.csv (uniform taper, no calibration: the ideal gives N)
    const gainLoss = (b: Record<string, string>, f: number) => {
      const az = Number(b.az_deg) * DEG, el = Number(b.el_deg) * DEG;
      const u = Math.cos(el) * Math.sin(az), v = Math.sin(el), k = (2 * Math.PI * f) / 299792458;
      let re = 0, im = 0;
      for (const c of codes.filter((x) => x.beam === b.beam)) {
        const e = Number(c.element), x = (e % 6) * 0.5 * lam, y = Math.floor(e / 6) * 0.5 * lam;
        const a = Math.pow(10, (-Number(c.atten_code) * 0.5) / 20), ph = (Number(c.phase_code) * 2 * Math.PI) / 16 + k * (x * u + y * v);
        re += a * Math.cos(ph);
        im += a * Math.sin(ph);
      }
      return -20 * Math.log10(Math.hypot(re, im) / 24);
    };
    for (const b of beams) {
      // derived: scan loss = −10·log10(cos^100 θ), cos θ = cos el · cos az
      const cosT = Math.cos(Number(b.el_deg) * DEG) * Math.cos(Number(b.az_deg) * DEG);
      expect(Number(b.scan_loss_db), `beam ${b.beam}`).toBeCloseTo(-1000 * Math.log10(cosT), 2);
      expect(Number(b.gain_loss_db), `beam ${b.beam}`).toBeCloseTo(gainLoss(b, 10e9), 4);
      for (const row of sq.filter((x) => x.beam === b.beam)) expect(Number(row.gain_loss_db), `beam ${b.beam} at ${row.frequency_hz}`).toBeCloseTo(gainLoss(b, Number(row.frequency_hz)), 4);
    }
  });

  it("a band point past the analysis-grid limit: build refuses (exit 2, /band, nothing written), --no-analysis builds, check warns", () => {
    const t = tempDir();
    // derived: 8 × 5.2 mm at 2.8 THz is 388.5 λ, past the ~256 λ the 2048 × 2048 grid holds; at 280 GHz it is 38.9 λ
    const s = writeScenario(baseScenario({ frequency: "280 GHz", band: { from: "280 GHz", to: "2.8 THz", step: "2.52 THz" }, array: { lattice: { kind: "rectangular", columns: 8, rows: 8, dx: "5.2 mm", dy: "5.2 mm" } } }), {}, join(t, "s"));
    const r = cli(["build", s, "-o", join(t, "b")]);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/\/band: the analysis grid would need .* at 2\.8 THz \(a band point\)/);
    expect(existsSync(join(t, "b"))).toBe(false);
    expect(cli(["build", s, "-o", join(t, "b"), "--no-analysis"]).code).toBe(0);
    expect(cli(["check", s]).stdout).toMatch(/warning: build refuses its band analysis \(sweep, report and --no-analysis builds are not concerned\)/);
  });

  it("a scenario without element or band writes the version 1 columns and no squint.csv", () => {
    const s = writeScenario(baseScenario());
    const out = join(tempDir(), "b");
    expect(cli(["build", s, "-o", out]).code).toBe(0);
    expect(readFileSync(join(out, "beams.csv"), "utf8").split("\n")[0]).toBe("frequency_hz,beam,az_deg,el_deg,u,v,peak_u,peak_v,pointing_error_deg,psl_ideal_db,psl_db,sll_rise_db,gain_loss_db,rms_phase_error_deg,rms_amp_error_db,clipped");
    expect(existsSync(join(out, "squint.csv"))).toBe(false);
    const m = JSON.parse(readFileSync(join(out, "manifest.json"), "utf8"));
    expect(m.extra.summary.scan_loss_db).toBeUndefined();
    expect(m.extra.band).toBeUndefined();
  });

  it("check prints the instantaneous bandwidth at the widest scan and the fill time, and says when the band asks for true time delay", () => {
    const s = writeScenario(doc(), { "element.csv": table });
    const r = cli(["check", s]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/widest scan {6}beam 5, θ = 50\.73°/);
    expect(r.stdout).toMatch(/inst\. bandwidth {2}.* for a squint of half the beamwidth/);
    expect(r.stdout).toMatch(/fill time {8}\d+\.\d ps across the aperture/);
    // beam 5 (az −50°, el 10°; the first of the widest): sin θ = hypot(cos 10°·sin 50°, sin 10°) → θ = 50.73° (derived)
    // a 6-element-wide aperture has a wide beam: 27–29.5 GHz stays within half of it
    expect(r.stdout).toMatch(/the band stays within these edges/);
    const wide = writeScenario(doc({ array: { lattice: { kind: "rectangular", columns: 64, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } }, band: { from: "24 GHz", to: "32 GHz", step: "2 GHz" } }), { "element.csv": table });
    const w = cli(["check", wide, "--json"]);
    expect(w.code, w.stderr).toBe(0);
    const j = JSON.parse(w.stdout);
    expect(j.facts.perFrequency[0].bandNeedsTrueTimeDelay).toBe(true);
    expect(j.warnings.join("\n")).toMatch(/asks for true time delay/);
  });
});
