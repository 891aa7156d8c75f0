/**
 * steercode's printed beams.csv / squint.csv against an independent brute force in
 * numpy/scipy (test/fixtures/scipy/brute_beams.py, Debian's /usr/bin/python3): dense
 * u-v raster over the visible disc, dense horizon trace, scipy.optimize refinement,
 * weights from codes.csv through the documented channel model. Adversarial geometries at
 * the edge of visible space, with and without an element pattern (cosine, and a table
 * interpolated by the script itself as README "Element pattern" describes). Tolerances as
 * README: PSL 0.05 dB, pointing 0.001°.
 */
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";

const SCRIPT = join(import.meta.dirname, "..", "fixtures", "scipy", "brute_beams.py");

function rows(path: string): Record<string, string>[] {
  const [head, ...lines] = readFileSync(path, "utf8").trim().split("\n");
  const h = head!.split(",");
  return lines.map((l) => Object.fromEntries(l.split(",").map((v, i) => [h[i]!, v])));
}

function brute(out: string, band = false): Record<string, number>[] {
  const r = spawnSync("/usr/bin/python3", [SCRIPT, out, ...(band ? ["--band"] : [])], { encoding: "utf8", timeout: 120_000, env: { ...process.env, BRUTE_NGRID: "601" } });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout.replace(/-Infinity/g, "null"));
}

/**
 * Builds `sc` into DIR/out and compares every squint.csv row with the brute force
 * (numpy/scipy via /usr/bin/python3, brute_beams.py --band): pointing error and gain loss
 * within 0.001.
 */
function expectSquintAsBrute(dir: string, sc: string): void {
  const out = join(dir, "out");
  expect(cli(["build", sc, "-o", out]).code).toBe(0);
  const mine = rows(join(out, "squint.csv"));
  const ref = brute(out, true);
  expect(ref.length).toBe(mine.length);
  for (const r of ref) {
    const m = mine.find((x) => Number(x.beam) === r.beam && Number(x.frequency_hz) === r.frequency_hz)!;
    expect(Math.abs(Number(m.pointing_error_deg) - r.pointing_error_deg!), `beam ${r.beam} at ${r.frequency_hz} Hz`).toBeLessThan(0.001);
    expect(Math.abs(Number(m.gain_loss_db) - r.gain_loss_db!), `beam ${r.beam} at ${r.frequency_hz} Hz gain loss`).toBeLessThan(0.001);
  }
}

/** A tabulated element: `gain(θ°, φ°)` dB on θ = 0, step … 90 and the φ list (README "Element pattern"). */
function elementTable(step: number, phis: number[], gain: (t: number, f: number) => number, digits = 6): string {
  let s = "theta_deg,phi_deg,gain_db\n";
  for (let t = 0; t <= 90; t += step) for (const f of phis) s += `${t},${f},${gain(t, f).toFixed(digits)}\n`;
  return s;
}
/** φ-dependent, falling 12–18 dB to θ = 85° and a further 25 dB onto the horizon (sampled coarsely: 5° × 30°). */
const STEEP = elementTable(5, [0, 30, 60, 90, 120, 150, 180, 210, 240, 270, 300, 330], (t, f) => -12 * (t / 90) ** 2 * (1 + 0.5 * Math.cos((f * Math.PI) / 180)) - (t === 90 ? 25 : 0));
/** rising toward the horizon (+8 dB, ±30 % with φ): the main lobe of a wide scan peaks on the horizon */
const RISING = elementTable(3, [0, 90, 180, 270], (t, f) => 8 * (t / 90) ** 2 * (1 + 0.3 * Math.cos((2 * f * Math.PI) / 180)));
/** rotationally symmetric, −3 dB at the horizon */
const GENTLE = elementTable(2, [0], (t) => -3 * (t / 90) ** 2);

/**
 * cal.csv with a frequency_hz column: a set at each of `freqs`, phases spread over 360° and
 * moved by up to ±170° between the sets, gains ±1.5 dB; element 0 moves by exactly 180°
 * (interpolated the positive way) and element 1 from 359° to 1° (the shorter way, across 0).
 */
function calPerFrequency(n: number, freqs: number[]): string {
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const p0 = Array.from({ length: n }, () => 360 * rnd() - 180), g0 = Array.from({ length: n }, () => 2 * rnd() - 1);
  let s = "element,phase_offset_deg,gain_offset_db,frequency_hz\n";
  freqs.forEach((f, k) => {
    for (let e = 0; e < n; e++) {
      const p = e === 0 ? 10 + 180 * k : e === 1 ? (k % 2 ? 1 : 359) : p0[e]! + (k ? 340 * rnd() - 170 : 0);
      s += `${e},${p.toFixed(4)},${(g0[e]! + (k ? 3 * rnd() - 1.5 : 0)).toFixed(4)},${f}\n`;
    }
  });
  return s;
}

/**
 * A 3 × 20 list at 0.64 λ × 0.52 λ (10 GHz), every x moved by 0 to 6 nm (so no FFT grid
 * holds it and the direct sum runs), with an invented calibration: a random scenario on
 * which a horizon maximum's refined peak sat in the nearest cell's main-lobe mask (the
 * flood's overshoot) and its sample, 0.011 dB lower, was printed.
 */
function unevenList(): { "el.csv": string; "cal.csv": string; "beams.csv": string } {
  const lam = 299792458 / 10e9;
  const ph = [-69.816, -84.097, 9.482, 56.335, 120.769, 47.407, -164.850, 49.907, -25.406, -39.250, -9.840, -161.626, -92.771, 88.668, -49.738, 13.193, -106.334, 58.075, 76.779, -121.108, -64.319, 152.682, 127.173, 25.203, 12.993, 5.225, -125.434, 171.889, 105.209, 45.747, -172.698, -36.745, 110.987, -144.545, 43.256, 130.709, -100.491, 109.451, -158.235, -114.443, 30.451, -114.172, 36.525, -79.018, 109.034, 82.365, 126.864, -80.667, 47.860, 167.712, 103.999, -148.212, 131.758, -113.748, -111.357, 136.166, -50.263, -75.530, 121.942, -52.286];
  const gn = [-0.099, -0.428, 0.479, 0.090, -0.205, -0.307, 0.401, 0.167, -0.478, -0.282, -0.152, -0.094, 0.295, 0.100, 0.106, -0.370, 0.450, 0.415, -0.249, -0.016, 0.080, -0.024, 0.254, 0.283, 0.237, -0.126, -0.013, 0.173, -0.041, 0.289, 0.217, -0.362, -0.056, 0.109, 0.063, -0.469, -0.212, 0.263, -0.063, 0.206, 0.467, 0.442, -0.032, 0.369, 0.009, -0.141, -0.365, -0.225, 0.362, -0.314, -0.424, -0.394, -0.491, -0.404, -0.060, -0.475, -0.121, -0.140, 0.285, 0.183];
  let el = "element,x_m,y_m\n", cal = "element,phase_offset_deg,gain_offset_db\n";
  for (let e = 0; e < 60; e++) {
    el += `${Number((((e % 3) - 1) * 0.64 * lam).toPrecision(12)) + 1e-9 * (e % 7)},${(((Math.floor(e / 3)) - 9.5) * 0.52 * lam).toPrecision(12)}\n`.replace(/^/, `${e},`);
    cal += `${e},${ph[e]},${gn[e]}\n`;
  }
  return { "el.csv": el, "cal.csv": cal, "beams.csv": "az_deg,el_deg\n-0.03,-25.83\n51.76,-9.75\n" };
}

/**
 * 64 elements scattered (seeded) over 7 λ × 6 λ at 10 GHz, with calibration: enough
 * elements that the grid is sampled by the non-uniform FFT (nufft.ts) instead of the
 * direct sum, so its grid values seed the search here.
 */
function scatteredList(): { "el.csv": string; "cal.csv": string; "beams.csv": string } {
  const lam = 299792458 / 10e9;
  let seed = 20261203;
  const rnd = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
  let el = "element,x_m,y_m\n", cal = "element,phase_offset_deg,gain_offset_db\n";
  for (let e = 0; e < 64; e++) {
    el += `${e},${((rnd() - 0.5) * 7 * lam).toPrecision(10)},${((rnd() - 0.5) * 6 * lam).toPrecision(10)}\n`;
    cal += `${e},${(rnd() * 360 - 180).toFixed(3)},${(rnd() - 0.5).toFixed(3)}\n`;
  }
  return { "el.csv": el, "cal.csv": cal, "beams.csv": "az_deg,el_deg\n0,0\n-35,20\n70,-10\n" };
}

/** elements.csv of a cols × rows rectangular lattice at dx × dy λ (fHz), centred, 7 digits: a lattice the analysis sees as a list (direct sums). */
function latticeAsList(cols: number, rows: number, dx: number, dy: number, fHz: number): string {
  const lam = 299792458 / fHz;
  let s = "element,x_m,y_m\n";
  for (let e = 0; e < cols * rows; e++) s += `${e},${(((e % cols) - (cols - 1) / 2) * dx * lam).toPrecision(7)},${((Math.floor(e / cols) - (rows - 1) / 2) * dy * lam).toPrecision(7)}\n`;
  return s;
}

const cases: { name: string; over: Record<string, unknown>; files?: Record<string, string>; pslTol?: number }[] = [
  // a lobe in the rim between the outermost visible cells and the horizon: a grating lobe's
  // flank rising toward the horizon met by the cosine element's fall to 0 on it, so that the
  // product peaks 0.005 inside the horizon while the last cell (0.022 inward) shows −46.98 dB
  // and the horizon trace 0 (lobes.ts rimClimbs). Found by a random search against this
  // brute force (2026-12-03): the ideal PSL printed −37.10 dB, brute force −35.17 dB
  {
    name: "9×8 lattice at 0.796 × 0.602 λ as elements.csv, Dolph–Chebyshev −37 dB, cos^0.89: a lobe between the last cell and the horizon",
    over: { frequency: "16.764 GHz", array: { elements: "el.csv" }, taper: { kind: "chebyshev", sidelobe: "-37 dB" }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, element: { pattern: "cosine", exponent: 0.89 } },
    files: { "el.csv": latticeAsList(9, 8, 0.796, 0.602, 16.764e9), "beams.csv": "az_deg,el_deg\n2.64,0.29\n" },
    pslTol: 0.002,
  },
  {
    // a line array takes E on the cut through the commanded direction to the chord's end and
    // along the horizon past it (README "Element pattern"): with a table rising toward the
    // horizon the pattern has a kink at the chord's end, a local maximum 0.057 dB over the
    // trough before it, that no smooth search found. Beam 2 (az 63.03°): the optimized codes
    // printed PSL −16.11 dB (the optimizer had pushed down everything else the analysis saw),
    // brute force −4.78 dB at the chord's end u = 0.9849. Found by a random search against this
    // brute force (2026-12-03); the codes are the optimizer's, so all four beams stay (its seed
    // depends on the beam's index)
    name: "12×1 row at 0.479 λ, tabulated element rising 2.7–2.9 dB onto the horizon, optimized codes: a maximum at the end of the cut's chord",
    over: {
      frequency: "17.011 GHz", array: { lattice: { kind: "rectangular", columns: 12, rows: 1, dx: "0.479 lambda", dy: "0.768 lambda" } },
      taper: { kind: "chebyshev", sidelobe: "-29 dB" }, quantizer: { method: "optimized", objective: "psl" }, beams: { kind: "list", file: "beams.csv" },
      phaseShifter: { bits: 3 }, attenuator: { bits: 4, step: "0.5 dB" }, calibration: "cal.csv", element: { pattern: "table", file: "el.csv" },
    },
    files: {
      "beams.csv": "az_deg,el_deg\n-6.5583,37.1974\n-18.0188,34.6877\n63.0322,-9.9764\n-68.6812,-66.9282\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,72.163,-0.848\n1,152.854,-1.466\n2,121.479,1.135\n3,83.360,0.133\n4,-144.147,-1.425\n5,132.833,0.672\n6,30.808,-0.568\n7,-164.079,0.797\n8,-17.782,1.171\n9,-121.282,1.030\n10,-110.392,-1.392\n11,1.712,-0.593\n",
      "el.csv": elementTable(3, [0, 30, 60, 90, 120, 150, 180, 210, 240, 270, 300, 330], (t, f) => 2.6888199392442083 * (t / 90) ** 2 * (1 + 0.09277428227531 * Math.cos((f * Math.PI) / 180)), 4),
    },
    pslTol: 0.002,
  },
  {
    // a table falling 25 dB from θ = 88° to 90°: the product peaks 0.0007 inside the chord's
    // end, between the last grid cell and it: beam 0's ideal PSL printed −21.47 dB (the next
    // lobe), brute force −20.94 dB at u = −0.9528 (found by the same random search)
    name: "6×1 row at 0.835 λ, tabulated element falling 25 dB onto the horizon, Chebyshev −22 dB: a lobe just inside the chord's end",
    over: {
      frequency: "9.609 GHz", array: { lattice: { kind: "rectangular", columns: 6, rows: 1, dx: "0.835 lambda", dy: "0.588 lambda" } },
      taper: { kind: "chebyshev", sidelobe: "-22 dB" }, beams: { kind: "list", file: "beams.csv" },
      phaseShifter: { bits: 5 }, attenuator: { bits: 4, step: "0.5 dB" }, calibration: "cal.csv", element: { pattern: "table", file: "el.csv" },
    },
    files: {
      "beams.csv": "az_deg,el_deg\n0.9048,17.5582\n-27.8191,77.8234\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,154.465,0.901\n1,106.139,1.020\n2,-8.748,-0.323\n3,-58.196,-0.895\n4,-146.173,0.350\n5,-83.798,-0.690\n",
      "el.csv": elementTable(2, [0, 90, 180, 270], (t, f) => 0.9089354339819824 * (t / 90) ** 2 * (1 + 0.013388834749225986 * Math.cos((f * Math.PI) / 180)) - (t === 90 ? 25 : 0), 4),
    },
    pslTol: 0.002,
  },
  {
    // the same at a wide scan: az −40° el −5° on a 12 × 12 list at 0.55 × 0.5 λ, the grating
    // lobe's flank at u ≈ +1: ideal PSL −28.86 dB printed, brute force −26.82 dB
    name: "12×12 lattice at 0.55 × 0.5 λ as elements.csv, Dolph–Chebyshev −30 dB, cos element, az −40° el −5°: a lobe in the rim at the far horizon",
    over: { frequency: "28 GHz", array: { elements: "el.csv" }, taper: { kind: "chebyshev", sidelobe: "-30 dB" }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 6 }, element: { pattern: "cosine", exponent: 1 } },
    files: { "el.csv": latticeAsList(12, 12, 0.55, 0.5, 28e9), "beams.csv": "az_deg,el_deg\n-40,-5\n" },
    pslTol: 0.002,
  },
  {
    // the realized pattern of the last beam has no sidelobe in visible space (the brute force:
    // none); psl_db −543.38 dB was printed, cos^6.71 of the rounding of a horizon point
    // (1 − u² − v² ~ 1e-16) taken as a lobe. Found by a random search against this brute force
    name: "5×2 triangular at 0.524 × 0.446 λ, Dolph–Chebyshev −35 dB, cos^6.71, optimized codes: no sidelobe, not −543 dB from the horizon's rounding",
    over: {
      frequency: "13.905 GHz", array: { lattice: { kind: "triangular", columns: 5, rows: 2, dx: "0.524 lambda", dy: "0.446 lambda", offset: 0.5 } },
      taper: { kind: "chebyshev", sidelobe: "-35 dB" }, quantizer: { method: "optimized", objective: "psl" }, beams: { kind: "list", file: "beams.csv" },
      phaseShifter: { bits: 4 }, attenuator: { bits: 6, step: "0.25 dB" }, calibration: "cal.csv", element: { pattern: "cosine", exponent: 6.71 },
    },
    files: {
      "beams.csv": "az_deg,el_deg\n-9.107107,20.282651\n19.667883,-2.285876\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,94.854,-0.825\n1,-108.458,0.002\n2,-99.333,0.341\n3,-101.568,-0.099\n4,-8.240,0.279\n5,1.068,-0.303\n6,42.645,-1.016\n7,-29.422,0.588\n8,-1.533,0.318\n9,-29.615,0.264\n",
    },
    pslTol: 0.002,
  },
  {
    // a lobe between the last visible row of cells and the horizon, that row lying on the two
    // rows' null (v = 0.9416), so that the flood ran through it: at boresight −34.60 dB was
    // printed (ideal; realized −31.92), brute force −30.18 dB at v = ±0.9885; found by a random
    // search against this brute force (2026-12-03)
    name: "6×2 at 0.754 × 0.531 λ, Taylor −35 dB, cos^0.98 element: a lobe between the last row of cells and the horizon",
    over: { frequency: "6.078 GHz", array: { lattice: { kind: "rectangular", columns: 6, rows: 2, dx: "0.754 lambda", dy: "0.531 lambda" } }, taper: { kind: "taylor", sidelobe: "-35 dB", nbar: 7 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 3 }, attenuator: { bits: 7, step: "0.5 dB" }, element: { pattern: "cosine", exponent: 0.98 } },
    files: { "beams.csv": "az_deg,el_deg\n0,0\n-81.214745,-14.070945\n" },
    pslTol: 0.002,
  },
  {
    name: "64 scattered elements over 7 λ × 6 λ, calibration, Taylor −25 dB: the grid by the non-uniform FFT",
    over: { array: { elements: "el.csv" }, calibration: "cal.csv", taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, attenuator: { bits: 8, step: "0.1 dB" } },
    files: scatteredList(),
    pslTol: 0.002,
  },
  {
    // a line along y, beams onto the horizon off its plane (the ideal PSL there was −24.37 dB, brute force −20.42 dB)
    name: "1×8 line at λ/2, Taylor −25 dB, θ = 90° at φ = 45° and 90°",
    over: { array: { lattice: { kind: "rectangular", columns: 1, rows: 8, dx: "0.5 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "thetaphi", theta: { from: 85, to: 90, step: 5 }, phi: { from: 0, to: 90, step: 45 } }, phaseShifter: { bits: 5 } },
  },
  {
    name: "5×4 triangular at 0.55 λ, beams at az/el 89°–89.9°",
    over: { array: { lattice: { kind: "triangular", columns: 5, rows: 4, dx: "0.55 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 } },
    files: { "beams.csv": "az_deg,el_deg\n89,0\n89.9,0\n-89.9,-60\n0,89.9\n" },
  },
  {
    // grating lobe exactly on the horizon (u0 = 2/3 at 0.6 λ) and just either side of it
    name: "6×5 at 0.6 λ, uniform, grating lobe on and about the horizon",
    over: { array: { lattice: { kind: "rectangular", columns: 6, rows: 5, dx: "0.6 lambda", dy: "0.6 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 } },
    files: { "beams.csv": "u,v\n0.6666666666666666,0\n0.66,0\n0.67,0\n" },
  },
  // narrow 2-D lattices (one cell of the grid is a large step in the narrow direction): lobes
  // cut off by the horizon between the trace's samples; skipping the trace's refinement
  // puts the ideal PSL 0.08–0.10 dB low here
  {
    name: "2×12 at 0.55 λ, beams at θ 64°–89.6°",
    over: { array: { lattice: { kind: "rectangular", columns: 2, rows: 12, dx: "0.55 lambda", dy: "0.55 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 } },
    files: { "beams.csv": "az_deg,el_deg\n-89,60\n89.5,-45\n-60,-29.5\n" },
  },
  {
    // az 90°: the main lobe's flat top lies 0.56° inside the horizon, a grating lobe as high elsewhere
    name: "10×3 triangular at 0.9 λ (grating lobes in visible space), beams at θ 85°–90°",
    over: { array: { lattice: { kind: "triangular", columns: 10, rows: 3, dx: "0.9 lambda", dy: "0.9 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 } },
    files: { "beams.csv": "az_deg,el_deg\n85,0\n90,0\n0,89\n-60,-60\n" },
  },
  // element patterns: a sidelobe peaking within half a cell of the horizon, or on it, was
  // judged by the mask of the invisible rim, which the main lobe floods whenever it touches
  // the horizon (the element-weighted window is 0 there): PSL printed 0.2–0.8 dB too low
  {
    // grating lobes at (−0.60, ±0.79): −1.27 dB printed, brute force −0.70 dB
    name: "8×6 triangular at 0.6 λ, tabulated element (φ-dependent, −25 dB onto the horizon), beams at az 85°–89.9°",
    over: { array: { lattice: { kind: "triangular", columns: 8, rows: 6, dx: "0.6 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, element: { pattern: "table", file: "el.csv" } },
    files: { "beams.csv": "az_deg,el_deg\n85,0\n89.9,0\n0,89.9\n60,25\n", "el.csv": STEEP },
  },
  {
    // beam 1 at u = v = 0.7: cos^0.2 −7.38 dB printed, brute force −6.59 dB; the table −6.46 / −6.26 dB
    name: "6×5 at 0.6 λ, cos^0.2 element, grating lobe about the horizon",
    over: { array: { lattice: { kind: "rectangular", columns: 6, rows: 5, dx: "0.6 lambda", dy: "0.6 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "cosine", exponent: 0.2 } },
    files: { "beams.csv": "u,v\n0.66,0\n0.7,0.7\n" },
  },
  {
    name: "6×5 at 0.6 λ, tabulated element −3 dB at the horizon, grating lobe about the horizon",
    over: { array: { lattice: { kind: "rectangular", columns: 6, rows: 5, dx: "0.6 lambda", dy: "0.6 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "table", file: "el.csv" } },
    files: { "beams.csv": "u,v\n0.66,0\n0.7,0.7\n", "el.csv": GENTLE },
  },
  {
    // ideal PSL at az 89°: −5.28 dB printed, brute force −5.14 dB (a lobe cut off by the horizon)
    name: "5×4 triangular at 0.55 λ, tabulated element −3 dB at the horizon, beams at az 89°–89.9°",
    over: { array: { lattice: { kind: "triangular", columns: 5, rows: 4, dx: "0.55 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, element: { pattern: "table", file: "el.csv" } },
    files: { "beams.csv": "az_deg,el_deg\n89,0\n89.9,0\n", "el.csv": GENTLE },
  },
  {
    // the main lobe peaks on the horizon: az 70° printed pointing 19.842° (0.08 dB below the peak), brute force 20.000°;
    // the table's power was 0 at horizon points a rounding past u² + v² = 1, and its central differences straddled that drop
    name: "3×10 triangular at 0.7 λ, tabulated element rising toward the horizon, beams at az 70°–90° and el 90°",
    over: { array: { lattice: { kind: "triangular", columns: 3, rows: 10, dx: "0.7 lambda", dy: "0.7 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "table", file: "el.csv" } },
    files: { "beams.csv": "az_deg,el_deg\n70,0\n85,0\n90,0\n-45,44\n0,90\n", "el.csv": RISING },
  },
  {
    // a table frequency between the listed calibration sets (28 GHz, 28.7 GHz) and one listed (27 GHz; there a main lobe
    // squeezed against the horizon by the opposite grating lobe has its flat top 2.6° inside)
    name: "8×6 at 27, 28 and 28.7 GHz, calibration listed at 27 and 29 GHz (interpolated between), beams out to az 89.9°",
    over: { frequency: ["27 GHz", "28 GHz", "28.7 GHz"], array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "0.5 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, attenuator: { bits: 5, step: "0.5 dB" }, calibration: "cal.csv" },
    files: { "beams.csv": "az_deg,el_deg\n30,10\n85,0\n89.9,0\n", "cal.csv": calPerFrequency(48, [27e9, 29e9]) },
  },
  // tiny planar arrays steered at the edge of visible space: the realized main lobe peaks on
  // the horizon and a grating lobe as high as it appears across the disc (PSL 0 dB); a third,
  // polar-raster check agreed with both (peak u, v within 2e-6, PSL within 0.05 dB)
  {
    name: "2×2 at λ/2, 4 bits, beams at θ 80°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 2, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 } },
    files: { "beams.csv": "az_deg,el_deg\n80,0\n89.9,0\n0,85\n45,44\n-60,29.5\n" },
  },
  {
    name: "3×2 at λ/2, Taylor −25 dB, 5 bits, beams at θ 80°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 3, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 } },
    files: { "beams.csv": "az_deg,el_deg\n80,0\n89,0\n0,89.9\n45,44\n-60,29.5\n" },
  },
  {
    name: "2×1 at λ/2 (two elements in a row), 3 bits, beams at θ 80°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 3 } },
    files: { "beams.csv": "az_deg,el_deg\n80,0\n89.9,0\n0,85\n-60,29.5\n" },
  },
  // the same tiny arrays with calibration errors (unequal channels): the realized main lobe
  // ends in a trough between the last visible grid cell and the horizon, and the pattern
  // rises again to the horizon, a sidelobe narrower than a cell that the nearest cell's
  // main-lobe mask hid (2×2 at boresight: no PSL printed, brute force −23.73 dB at
  // (−1.000, −0.012); 2×1 at boresight and at az 0° el 70°/89.9°: none, brute force −32.75 dB at u = −1)
  {
    name: "2×2 at λ/2 with calibration errors, 4 bits, beams at boresight and θ 70°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 2, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, calibration: "cal.csv" },
    files: { "beams.csv": "az_deg,el_deg\n0,0\n70,0\n0,89.9\n", "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,72.016,-0.782\n1,82.072,1.250\n2,72.590,-0.931\n3,137.635,0.791\n" },
  },
  {
    name: "2×1 at λ/2 (two elements in a row) with calibration errors, 4 bits, beams at boresight and θ 70°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, calibration: "cal.csv" },
    files: { "beams.csv": "az_deg,el_deg\n0,0\n70,0\n0,70\n0,89.9\n30,59.9\n", "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,-164.143,1.257\n1,-144.196,-0.640\n" },
  },
  // line arrays with an element pattern: E on the cut through the commanded direction
  // (README "Element pattern"); the lobe search had compared the main lobe at the commanded
  // v0 with the same |AF|² ridge nearer boresight, where E is larger
  {
    // beam 4 (el 85°): PSL +2.65 dB printed, beam 5 (el 89.9°) +28.13 dB; brute force: none (E is 0 past the cut's chord)
    name: "8×1 row at λ/2, cos^1.5 element, beams at az 80°–89.9° and el 85°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "cosine", exponent: 1.5 } },
    files: { "beams.csv": "az_deg,el_deg\n80,0\n89.9,0\n0,85\n0,89.9\n45,44\n-60,29.5\n" },
  },
  {
    // a horizon point on the main lobe's flank (u = 0.665) took the mask of the cell inward along its
    // radius (u = 0.50, past the first null): PSL −7.64 dB printed (ideal −8.23), brute force −9.97 (ideal −9.64)
    name: "8×1 row at λ/2, cos^1.5 element, beams off the row's plane: az 60° el 10°, az −60° el 29.5°",
    over: { array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "cosine", exponent: 1.5 } },
    files: { "beams.csv": "az_deg,el_deg\n60,10\n-60,29.5\n" },
  },
  {
    // az 60° el 10°: the sidelobe at v = −0.231 (realized) refined to a point whose nearest cell the main lobe's flood had
    // run into past the null, and its grid cell's value was kept: PSL −27.67 dB printed (ideal −27.11), brute force −26.22 (ideal −25.64)
    // az −60° el 29.5° and az −55° el 29.5°: PSL −18.33 / −18.99 dB printed, brute force −18.17 / −18.85 dB (a lobe 3 cells
    // wide sampled half a cell either side of its peak, 1.2 dB under it, was never refined; and the column's copies of its
    // largest lobe filled every candidate place)
    name: "1×8 column at λ/2, Taylor −25 dB, cos^4 element, calibration errors, beams at boresight, az 60° el 10°, az −60° and −55° el 29.5°",
    over: { array: { lattice: { kind: "rectangular", columns: 1, rows: 8, dx: "0.5 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, element: { pattern: "cosine", exponent: 4 }, calibration: "cal.csv" },
    files: {
      "beams.csv": "az_deg,el_deg\n0,0\n60,10\n-60,29.5\n-55,29.5\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,144.081,0.914\n1,-125.388,-0.604\n2,33.307,-0.072\n3,-35.465,-1.496\n4,29.343,1.236\n5,124.597,-0.706\n6,145.897,-1.420\n7,49.321,-0.876\n",
    },
  },
  {
    // a lobe just past the first null, lower than the last main-lobe sample and falling before the next sample, so the
    // main lobe's flood took it whole (found by a random search against this brute force): az −73.13° el 7.6°: PSL
    // −79.69 dB printed (a lobe at the chord's end), brute force −34.69 dB
    name: "1×7 column at 0.67 λ, Taylor −25 dB, cos^8 element, calibration errors, beams at az −73.1° and −72.3° (a lobe inside the flood)",
    over: { array: { lattice: { kind: "rectangular", columns: 1, rows: 7, dx: "0.67 lambda", dy: "0.67 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 6 }, element: { pattern: "cosine", exponent: 8 }, calibration: "cal.csv" },
    files: {
      "beams.csv": "az_deg,el_deg\n-73.13,7.6\n-72.25,1.0\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,2.434,-0.608\n1,-174.868,-1.489\n2,97.167,0.295\n3,20.728,1.395\n4,49.119,1.334\n5,154.928,-0.067\n6,153.212,-0.453\n",
    },
  },
  {
    // a lobe between the last array-factor null and the end of the visible chord, within one grid cell (found by a
    // random search against this brute force): az 84.279° el 4.3°: no PSL printed, brute force −42.15 dB (ideal −41.84)
    name: "1×10 column at 0.6 λ, uniform, cos^8 element, calibration errors, beams at az 81.5°–84.3° (lobes at the chord's end)",
    over: { array: { lattice: { kind: "rectangular", columns: 1, rows: 10, dx: "0.6 lambda", dy: "0.6 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, element: { pattern: "cosine", exponent: 8 }, calibration: "cal.csv" },
    files: {
      "beams.csv": "az_deg,el_deg\n84.279,4.3\n81.524,-9\n83.714,7.9\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,34.652,-0.015\n1,-70.299,-0.513\n2,-160.569,1.156\n3,53.327,-0.389\n4,143.798,-0.331\n5,-46.509,0.298\n6,65.913,0.889\n7,-35.822,0.314\n8,-129.614,-0.312\n9,159.431,0.053\n",
    },
  },
  {
    // the same at −34.7 … −65.9 dB (ideal PSL printed empty at az 87.665°, 84.762°, 75.88°)
    name: "1×6 column at 0.67 λ, uniform, cos^4 element, calibration errors, beams at az 75.9°–87.7°",
    over: { array: { lattice: { kind: "rectangular", columns: 1, rows: 6, dx: "0.67 lambda", dy: "0.67 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "cosine", exponent: 4 }, calibration: "cal.csv" },
    files: {
      "beams.csv": "az_deg,el_deg\n87.665,7.1\n84.762,-7.3\n82.196,-3.1\n75.880,1.0\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,-91.412,-0.368\n1,-148.614,-0.370\n2,-33.382,0.625\n3,141.299,-0.612\n4,19.046,-1.212\n5,-127.107,1.054\n",
    },
  },
  {
    // az 85° (chord |v| ≤ 0.087): PSL −9.09 dB printed, brute force −48.38 dB; az 45° el 44°: −14.47 / −16.78 dB
    name: "1×8 column at λ/2, Taylor −25 dB, tabulated element (φ-dependent, −25 dB onto the horizon), beams at θ 80°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 1, rows: 8, dx: "0.5 lambda", dy: "0.5 lambda" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, element: { pattern: "table", file: "el.csv" } },
    files: { "beams.csv": "az_deg,el_deg\n0,80\n0,89.9\n85,0\n45,44\n-60,29.5\n", "el.csv": STEEP },
  },
  {
    // az 60°: PSL +4.17 dB printed, brute force +0.63 dB (the cut's own horizon point beyond a dip, E +10.4 dB there)
    name: "6×1 row at 0.7 λ (grating lobes), tabulated element rising toward the horizon, beams at az 60°–89.9°",
    over: { array: { lattice: { kind: "rectangular", columns: 6, rows: 1, dx: "0.7 lambda", dy: "0.5 lambda" } }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, element: { pattern: "table", file: "el.csv" } },
    files: { "beams.csv": "az_deg,el_deg\n60,0\n89.9,0\n30,60\n-75,10\n", "el.csv": RISING },
  },
  {
    // more lobes within a scallop of each other than the six largest grid maxima the search
    // refined: the ideal PSL at az 6.01° el 3.37° was −26.9872 dB, brute force −26.9765 dB;
    // held here to 0.002 dB (the brute force's own refinement is good to ~1e-5 dB)
    name: "22×12 at 0.63 × 0.47 λ, Chebyshev −27 dB, cos element: the largest of many equal lobes",
    over: { array: { lattice: { kind: "rectangular", columns: 22, rows: 12, dx: "0.63 lambda", dy: "0.47 lambda" } }, taper: { kind: "chebyshev", sidelobe: "-27 dB" }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, attenuator: { bits: 8, step: "0.1 dB" }, element: { pattern: "cosine", exponent: 1 } },
    files: { "beams.csv": "az_deg,el_deg\n6.01,3.37\n-40,20\n0,0\n" },
    pslTol: 0.002,
  },
  {
    name: "3×20 list 0–6 nm off a lattice (direct sum), calibration, Taylor −28 dB: a horizon lobe in the flood's overshoot",
    over: { array: { elements: "el.csv" }, calibration: "cal.csv", taper: { kind: "taylor", sidelobe: "-28 dB", nbar: 4 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 6 }, attenuator: { bits: 8, step: "0.1 dB" } },
    files: unevenList(),
    pslTol: 0.002,
  },
  {
    // |AF|²·E dips and rises again within a grid cell, so the main lobe's flood took a lobe
    // whole: no PSL printed at boresight (brute force −19.09 dB), −19.71 dB for −17.55 at
    // az −11°; a brute-force campaign's scenario (254 random ones, 2026-12-03)
    name: "jittered 2×2 list, cos^3.12 element: a lobe behind a trough narrower than a cell",
    over: { frequency: "9.841 GHz", array: { elements: "el.csv" }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, attenuator: { bits: 8, step: "0.1 dB" }, element: { pattern: "cosine", exponent: 3.12 } },
    files: { "el.csv": "element,x_m,y_m\n0,-0.0136583,-0.0094826\n1,0.0043845,-0.0095344\n2,-0.0038633,0.0095381\n3,0.0130138,0.0117400\n", "beams.csv": "az_deg,el_deg\n0,0\n-10.951984,6.509046\n-9.548414,13.373791\n" },
    pslTol: 0.002,
  },
  {
    // z ≠ 0: in u-v the z term k·z·w has an infinite slope at the horizon (w = √(1 − u² − v²)), so the peak of a beam at
    // θ = 89.85° (az 89.418653° el 75.203463°) lies 1.8e-5 inside the horizon, where neither Newton in u-v nor the search
    // along the circle (w = 0) reaches it: pointing 1.1215° printed, brute force 1.1316°; a brute-force campaign's
    // scenario (254 random ones, 2026-12-03). Its beam at az 54.4° el 9.7° is left out: see README "Engine" (Known limit)
    name: "3×3 list with z offsets of ±0.019 λ, calibration, 3 bits, randomized: a peak just inside the horizon",
    over: { frequency: "25.329 GHz", array: { elements: "el.csv" }, calibration: "cal.csv", beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 3 }, attenuator: { bits: 6, step: "0.25 dB" }, quantizer: { method: "randomized", seed: 72 } },
    files: {
      "el.csv": "element,x_m,y_m,z_m\n0,-0.0065177,-0.0074330,-0.0002271\n1,-0.0009311,-0.0074330,-0.0001303\n2,0.0046555,-0.0074330,0.0000862\n3,-0.0037244,0.0000000,0.0001702\n4,0.0018622,0.0000000,0.0000847\n5,0.0074487,0.0000000,0.0001858\n6,-0.0065177,0.0074330,0.0000363\n7,-0.0009311,0.0074330,0.0001210\n8,0.0046555,0.0074330,0.0001815\n",
      "cal.csv": "element,phase_offset_deg,gain_offset_db\n0,-4.158,-0.283\n1,-18.842,0.905\n2,7.060,-0.383\n3,-30.868,0.650\n4,-7.209,0.039\n5,-40.685,0.095\n6,-21.101,-0.736\n7,7.454,-0.173\n8,38.892,0.311\n",
      "beams.csv": "az_deg,el_deg\n0.000000,0.000000\n88.050711,-57.119043\n85.387815,13.257642\n89.418653,75.203463\n",
    },
  },
  {
    // the flood took a lobe whole whose trough lies within a cell of it and past which no
    // flooded cell's exact pattern rises away from the main peak: at boresight the lobes at
    // (±0.125, ±0.8675), 0.3 dB over their trough between the rows v = 0.794 and 0.907 of the
    // grid, were missed: ideal PSL −30.44 dB printed (the next lobe), brute force −26.04 dB;
    // realized −30.30 for −25.98; a brute-force campaign's scenario (254 random ones,
    // 2026-12-03), here without its calibration errors
    name: "11×3 triangular at 0.449 × 0.551 λ, Chebyshev −30 dB, cos^0.52 element: a lobe 0.3 dB over its trough, inside the flood",
    over: { frequency: "21.094 GHz", array: { lattice: { kind: "triangular", columns: 11, rows: 3, dx: "0.449 lambda", dy: "0.551 lambda", offset: 0.5 } }, taper: { kind: "chebyshev", sidelobe: "-30 dB" }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 6 }, attenuator: { bits: 8, step: "0.1 dB" }, element: { pattern: "cosine", exponent: 0.52 } },
    files: { "beams.csv": "az_deg,el_deg\n0,0\n-7.033904,19.465044\n" },
    pslTol: 0.002,
  },
  {
    // a lobe narrower than half a cell between a null and the element's fall, inside the
    // flood: at boresight the lobes at (±0.121, ±0.857), −71.33 dB, were missed and no PSL
    // was printed (ideal or realized; brute force −71.33 and −71.80 dB); a brute-force
    // campaign's scenario (2026-12-03), here with the nearest quantizer
    name: "3×5 triangular list at 0.664 × 0.451 λ, Chebyshev −47 dB, cos^7.9 element: a lobe narrower than half a cell, inside the flood",
    over: { frequency: "23.934 GHz", array: { elements: "el.csv" }, taper: { kind: "chebyshev", sidelobe: "-47 dB" }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 4 }, attenuator: { bits: 8, step: "0.1 dB" }, element: { pattern: "cosine", exponent: 7.9 } },
    files: {
      "el.csv": "element,x_m,y_m\n0,-0.0099806,-0.0112983\n1,-0.0016634,-0.0112983\n2,0.0066537,-0.0112983\n3,-0.0058220,-0.0056491\n4,0.0024951,-0.0056491\n5,0.0108123,-0.0056491\n6,-0.0099806,0\n7,-0.0016634,0\n8,0.0066537,0\n9,-0.0058220,0.0056491\n10,0.0024951,0.0056491\n11,0.0108123,0.0056491\n12,-0.0099806,0.0112983\n13,-0.0016634,0.0112983\n14,0.0066537,0.0112983\n",
      "beams.csv": "az_deg,el_deg\n0,0\n-17.602647,21.080328\n",
    },
    pslTol: 0.002,
  },
];

/**
 * A beams.csv PSL cell against the brute force's value within 0.05 dB; no PSL (the brute
 * force's −Infinity, null here) must be an empty cell and an empty cell must be no PSL
 * (Number("") is 0, which would pass for a 0 dB grating lobe or for none).
 */
function expectPsl(cell: string, ref: number | null, what: string, tol = 0.05): void {
  if (ref === null) expect(cell, what).toBe("");
  else {
    expect(cell, `${what}: brute force ${ref.toFixed(4)} dB`).not.toBe("");
    expect(Math.abs(Number(cell) - ref), what).toBeLessThan(tol);
  }
}

describe("beams.csv against the numpy/scipy brute force", () => {
  for (const c of cases) {
    itWith([TOOLS.scipy], c.name, () => {
      const dir = tempDir();
      const sc = writeScenario(baseScenario({ outputs: ["csv"], ...c.over }), c.files ?? {}, dir);
      const out = join(dir, "out");
      expect(cli(["build", sc, "-o", out]).code).toBe(0);
      const mine = rows(join(out, "beams.csv"));
      const ref = brute(out);
      expect(ref.length).toBe(mine.length);
      for (const r of ref) {
        const m = mine.find((x) => Number(x.beam) === r.beam && Number(x.frequency_hz) === r.frequency_hz)!;
        // reference: brute force, numpy/scipy via /usr/bin/python3 (brute_beams.py)
        expect(Math.abs(Number(m.pointing_error_deg) - r.pointing_error_deg!), `beam ${r.beam} pointing`).toBeLessThan(0.001);
        expectPsl(m.psl_db!, r.psl_db!, `beam ${r.beam} psl`, c.pslTol);
        expectPsl(m.psl_ideal_db!, r.psl_ideal_db!, `beam ${r.beam} ideal psl`, c.pslTol);
        expect(Math.abs(Number(m.gain_loss_db) - r.gain_loss_db!), `beam ${r.beam} gain loss`).toBeLessThan(0.001);
        if (r.scan_loss_db !== undefined) expect(Math.abs(Number(m.scan_loss_db) - r.scan_loss_db), `beam ${r.beam} scan loss`).toBeLessThan(1e-4);
      }
    }, 180_000);
  }

  itWith([TOOLS.scipy], "squint.csv: 8×6 at 28 GHz played from 27 to 29 GHz, calibration listed at 27 and 29 GHz (interpolated between), θ = 60° and 85°", () => {
    const dir = tempDir();
    const sc = writeScenario(baseScenario({
      outputs: ["csv"], frequency: "28 GHz", array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "0.5 lambda", dy: "0.5 lambda" } },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "list", file: "beams.csv" }, phaseShifter: { bits: 5 }, attenuator: { bits: 5, step: "0.5 dB" },
      calibration: "cal.csv", band: { from: "27 GHz", to: "29 GHz", step: "0.5 GHz" },
    }), { "beams.csv": "az_deg,el_deg\n60,0\n85,0\n", "cal.csv": calPerFrequency(48, [27e9, 29e9]) }, dir);
    // calibration interpolated in brute_beams.py from README's rule
    expectSquintAsBrute(dir, sc);
  }, 180_000);

  itWith([TOOLS.scipy], "squint.csv: 6×2 lattice, beams at θ = 80° and 89°, band ±5 %", () => {
    const dir = tempDir();
    const sc = writeScenario(baseScenario({
      outputs: ["csv"], array: { lattice: { kind: "rectangular", columns: 6, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 }, beams: { kind: "thetaphi", theta: { from: 80, to: 89, step: 9 }, phi: { from: 0, to: 0, step: 1 } },
      phaseShifter: { bits: 5 }, band: { from: "9.5 GHz", to: "10.5 GHz", step: "0.5 GHz" },
    }), {}, dir);
    expectSquintAsBrute(dir, sc);
  }, 180_000);
});
