import { describe, expect, it } from "vitest";
import { gratingFreeScanDeg, reciprocalVectors, gratingLobeTest, gratingLobeVisible, angleBetweenDeg, azElToUvw, pointSetDiameter } from "../../src/core/geometry.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { deriveFacts } from "../../src/core/facts.js";
import { crc32 } from "node:zlib";
import { baseScenario, load } from "../helpers.js";

describe("grating lobes", () => {
  it("rectangular lattice: grating-free scan satisfies d/λ < 1/(1 + |sin θ|) (Mailloux, Phased Array Antenna Handbook, ch. 1; from memory)", () => {
    for (const dl of [0.5, 0.55, 0.6, 0.7, 0.8, 0.95]) {
      const g = reciprocalVectors({ dx: dl, dy: 0.5, offset: 0 }, 1);
      const theta = gratingFreeScanDeg(g, 0);
      const expected = dl <= 0.5 ? 90 : (Math.asin(1 / dl - 1) * 180) / Math.PI;
      expect(Math.abs(theta - expected)).toBeLessThan(1e-3); // bisection in sin θ; asin is steep near 90°
    }
  });

  it("triangular lattice (offset ½): the lobe nearest broadside sits at |g| = λ/(dx·dy)·hypot(dy, dx/2)", () => {
    // common practice: reciprocal lattice of a1 = (dx,0), a2 = (dx/2, dy)
    const g = reciprocalVectors({ dx: 1, dy: 0.8, offset: 0.5 }, 1);
    const nearest = Math.min(Math.hypot(g[0], g[1]), Math.hypot(g[2], g[3]), Math.hypot(g[0] + g[2], g[1] + g[3]), Math.hypot(g[0] - g[2], g[1] - g[3]));
    expect(nearest).toBeCloseTo(Math.hypot(0.8, 0.5) / 0.8, 12);
    expect(gratingLobeVisible(0, 0, g)).toBe(false);
  });

  it("gratingLobeTest (the lobes within reach of the disc, listed once) answers as gratingLobeVisible, inside and outside the disc, on the boundary too", () => {
    const r = mulberry32(5);
    let visible = 0, total = 0;
    for (let t = 0; t < 300; t++) {
      const d = 0.3 + 0.9 * r(), dy = 0.3 + 0.9 * r();
      const g = reciprocalVectors({ dx: d, dy, offset: [0, 0.5, r()][t % 3]! }, 1);
      const test = gratingLobeTest(g);
      const pts: [number, number][] = Array.from({ length: 40 }, () => { const a = 2 * Math.PI * r(), q = 1.2 * Math.sqrt(r()); return [q * Math.cos(a), q * Math.sin(a)]; });
      // points that put a lobe exactly on the horizon (|d̂ + g1| = 1), and the beam on the circle itself
      const a = 2 * Math.PI * r();
      pts.push([Math.cos(a) - g[0], Math.sin(a) - g[1]], [Math.cos(a), Math.sin(a)]);
      for (const [u, v] of pts) {
        const want = gratingLobeVisible(u, v, g);
        expect(test(u, v), `lattice ${d} × ${dy}, beam (${u}, ${v})`).toBe(want);
        visible += want ? 1 : 0;
        total++;
      }
    }
    // both answers occur often
    expect(visible / total).toBeGreaterThan(0.2);
    expect(visible / total).toBeLessThan(0.8);
  });

  it("check warns for beams that put a grating lobe into visible space", () => {
    const L = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.7 lambda", dy: "0.5 lambda" } }, beams: { kind: "uv", u: { from: 0, to: 0.6, step: 0.3 }, v: { from: 0, to: 0, step: 1 } } }));
    const f = deriveFacts(L.plan);
    // d/λ = 0.7: lobe at u0 − 1/0.7 = u0 − 1.4286 is visible once u0 > 0.4286 → only the beam at u = 0.6
    expect(f.perFrequency[0]!.gratingBeams).toEqual([2]);
    expect(f.warnings.join("\n")).toMatch(/grating lobe/);
  });
});

describe("facts", () => {
  it("far-field distance 2D²/λ (common practice) with D the aperture diagonal", () => {
    const L = load(baseScenario({ frequency: "10 GHz", array: { lattice: { kind: "rectangular", columns: 8, rows: 6, dx: "15 mm", dy: "20 mm" } } }));
    const f = deriveFacts(L.plan);
    const D = Math.hypot(8 * 0.015, 6 * 0.02);
    expect(f.perFrequency[0]!.farFieldM).toBeCloseTo((2 * D * D) / (299792458 / 10e9), 12);
    expect(f.tableBytes).toBe(3 * 48 * 2);
  });

  it("angle between directions is accurate at micro-degrees", () => {
    const a = azElToUvw(10, 5);
    const b = azElToUvw(10 + 1e-6, 5);
    expect(angleBetweenDeg(a, b)).toBeCloseTo(1e-6 * Math.cos((5 * Math.PI) / 180), 12);
  });
});

describe("CRC-32", () => {
  it('check value of ASCII "123456789" is 0xCBF43926 (CRC catalogue, CRC-32/ISO-HDLC)', () => {
    expect(crc32("123456789") >>> 0).toBe(0xcbf43926);
  });
});

describe("aperture size of element lists (far-field distance 2D²/λ)", () => {
  const brute = (x: Float64Array, y: Float64Array, z: Float64Array) => {
    let best = 0;
    for (let i = 0; i < x.length; i++) for (let j = i + 1; j < x.length; j++) best = Math.max(best, Math.hypot(x[i]! - x[j]!, y[i]! - y[j]!, z[i]! - z[j]!));
    return best;
  };
  it("equals the largest pairwise distance (derived: the definition, by brute force) on planar and 3-D sets, rings, lines, duplicates", () => {
    const rnd = mulberry32(9);
    for (let trial = 0; trial < 60; trial++) {
      const n = 1 + Math.floor(rnd() * 300);
      const x = new Float64Array(n), y = new Float64Array(n), z = new Float64Array(n);
      const shape = trial % 5;
      for (let i = 0; i < n; i++) {
        const t = 2 * Math.PI * rnd();
        if (shape === 0) (x[i] = rnd() - 0.5), (y[i] = rnd() - 0.5);
        else if (shape === 1) (x[i] = Math.cos(t)), (y[i] = Math.sin(t)); // every point on the hull
        else if (shape === 2) (x[i] = Math.round(rnd() * 8) * 0.01), (y[i] = 0); // a line, with repeats
        else if (shape === 3) (x[i] = rnd()), (y[i] = rnd()), (z[i] = rnd() * 0.3); // conformal
        else (x[i] = Math.cos(t) * 0.2), (y[i] = Math.sin(t) * 0.2), (z[i] = (i % 2) * 0.05);
      }
      expect(pointSetDiameter(x, y, z, n)).toBeCloseTo(brute(x, y, z), 12);
    }
  });
  it("a 256 × 256 element list gives the lattice's corner-to-corner distance", () => {
    const n = 65536;
    const x = new Float64Array(n), y = new Float64Array(n), z = new Float64Array(n);
    for (let i = 0; i < n; i++) (x[i] = (i % 256) * 0.005), (y[i] = Math.floor(i / 256) * 0.005);
    expect(pointSetDiameter(x, y, z, n)).toBeCloseTo(Math.hypot(255 * 0.005, 255 * 0.005), 12); // derived: Pythagoras
  });
});
