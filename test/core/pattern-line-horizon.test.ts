import { describe, expect, it } from "vitest";
import { METRICS, M } from "../../src/core/pattern/analyze.js";
import { baseScenario, load } from "../helpers.js";
import { analyseAll } from "./engine-run.js";

/** psl_ideal_db of the two listed beams on a columns × rows line at λ/2, Taylor −25 dB n̄ = 3. */
function lineIdealPsl(columns: number, rows: number, beamsCsv: string): [number, number] {
  const L = load(baseScenario({
    array: { lattice: { kind: "rectangular", columns, rows, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams: { kind: "list", file: "beams.csv" },
    taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
    phaseShifter: { bits: 5 },
  }), { "beams.csv": beamsCsv });
  const out = analyseAll(L.plan);
  return [out[M.psl_ideal_db]!, out[METRICS + M.psl_ideal_db]!];
}

describe("line arrays: the ideal PSL of a beam commanded onto the horizon", () => {
  // 1 column × 8 rows at λ/2 (a line along y), Taylor −25 dB n̄ = 3. The pattern depends on
  // v only, so every v in [−1, 1] is visible (at u = 0) whatever the beam's u.
  // Beam 0: θ = 90°, φ = 45° (u = v = 0.7071, on the horizon); beam 1: az 0°, el 45°
  // (u = 0, v = 0.7071). Both have the same ideal pattern over visible space.
  // source: brute force, numpy/scipy via /usr/bin/python3
  // (test/fixtures/scipy/brute_beams.py on this scenario built by steercode):
  // psl_ideal_db −20.41866 for both (|AF|² at v = −1, on the grating lobe's flank).
  // Before the fix (horizon.ts: the circle's extreme points) beam 0 gave −24.37 dB.
  it("matches brute force, and the beam at u = 0 with the same v", () => {
    const [onHorizon, atU0] = lineIdealPsl(1, 8, "az_deg,el_deg\n90,45\n0,45\n");
    expect(Math.abs(onHorizon - -20.41866)).toBeLessThan(0.05);
    expect(Math.abs(atU0 - -20.41866)).toBeLessThan(0.05);
  });
  // The same line along x (8 columns × 1 row): the pattern depends on u only; by symmetry
  // the same brute-force value holds for the beam at θ = 90°, φ = 45° and for az 45°, el 0°.
  it("along x too", () => {
    const [onHorizon, atV0] = lineIdealPsl(8, 1, "u,v\n0.7071067811865476,0.7071067811865475\n0.7071067811865476,0\n");
    expect(Math.abs(onHorizon - -20.41866)).toBeLessThan(0.05);
    expect(Math.abs(atV0 - -20.41866)).toBeLessThan(0.05);
  });
  // u = v = 0.7071067811865476 (cos 45° to 16 digits) sums to 1 + 2e-16 in doubles: the
  // horizon, as a u-v grid's beams within 1e-12 of it are (it was refused as outside
  // visible space while 0.7071067811865476, 0.7071067811865475 was taken)
  it("a listed u, v a rounding past the horizon is the horizon", () => {
    const [a, b] = lineIdealPsl(8, 1, "u,v\n0.7071067811865476,0.7071067811865476\n0.7071067811865476,0.7071067811865475\n");
    expect(Math.abs(a - -20.41866)).toBeLessThan(0.05);
    expect(Math.abs(a - b)).toBeLessThan(1e-6);
  });
});

describe("line arrays with an element: a maximum within the last sampling step before the chord's end, and at the line's end", () => {
  // 2 × 1 row at 0.508 λ, 29.695 GHz, Chebyshev −39 dB, a table rising to +8.7 dB at θ = 87°
  // and falling to −15.7 dB at 90°: its interpolant bumps 0.05 dB over a trough 0.002 inside
  // the chord's end (u = 0.9579), between two of chordEnds' samples; the ideal PSL printed
  // was −25.72 dB (the lobe at the other end). Found by a random search against the brute
  // force (2026-12-03). source: brute force, numpy/scipy via /usr/bin/python3
  // (test/fixtures/scipy/brute_beams.py, BRUTE_NGRID=601, on this scenario built by
  // steercode): psl_ideal_db −11.484828709193602, psl_db −47.98525843456572 (the realized
  // pattern's lobe at u = 1, just past the null, where the element's differences straddled
  // the line's end: none had been printed)
  it("matches the brute force's ideal and realized PSL", () => {
    let table = "theta_deg,phi_deg,gain_db\n";
    for (let t = 0; t <= 90; t += 3) table += `${t},0,${(7.415366481053695 * (t / 90) ** 2 * (1 + 0.25598479055230083) - (t === 90 ? 25 : 0)).toFixed(4)}\n`;
    const L = load(baseScenario({
      frequency: "29.695 GHz",
      array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "0.508 lambda", dy: "0.933 lambda" } },
      beams: { kind: "list", file: "beams.csv" },
      taper: { kind: "chebyshev", sidelobe: "-39 dB" },
      attenuator: { bits: 5, step: "0.5 dB" },
      element: { pattern: "table", file: "el.csv" },
    }), { "beams.csv": "az_deg,el_deg\n2.2579,-16.2271\n", "el.csv": table });
    const out = analyseAll(L.plan);
    expect(Math.abs(out[M.psl_ideal_db]! - -11.484828709193602)).toBeLessThan(0.002);
    expect(Math.abs(out[M.psl_db]! - -47.98525843456572)).toBeLessThan(0.002);
  });
});
