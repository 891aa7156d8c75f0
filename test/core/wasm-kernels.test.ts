/**
 * The analysis's WebAssembly kernels (wasm/*.ts, DEVELOPERS.md "Analysis speed"): built
 * from their sources, and each checked against an outside reference: fft.js (the FFT
 * library the transform was ported from, bit for bit), the DFT's defining sum, the array
 * factor's direct sum and its finite differences, and the flood and scan rules written out
 * plainly here.
 */
import { spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";
import FFT from "fft.js";
import { describe, expect, it } from "vitest";
import { AfEvaluator } from "../../src/core/pattern/evaluator.js";
import { PowerFft2 } from "../../src/core/pattern/fft.js";
import { allocTrace, traceLattice } from "../../src/core/pattern/horizon.js";
import { PatternGrid } from "../../src/core/pattern/grid.js";
import { CANDIDATES, LobeGridKernel, LOBES_ALWAYS, LOBES_WITHIN } from "../../src/core/pattern/lobe-kernel.js";
import { floodMainLobe } from "../../src/core/pattern/lobes.js";
import { mulberry32 } from "../../src/core/quantize/randomized.js";
import { baseScenario, load } from "../helpers.js";

const ROOT = fileURLToPath(new URL("../../", import.meta.url));

describe("the kernels' build", () => {
  it("src/core/pattern/wasm/ is what scripts/build-wasm.mjs makes of wasm/ (AssemblyScript)", () => {
    const r = spawnSync(process.execPath, ["scripts/build-wasm.mjs", "--check"], { cwd: ROOT, encoding: "utf8", timeout: 120_000 });
    expect(r.stderr).toBe("");
    expect(r.status).toBe(0);
  });
});

/** |2-D DFT|² of conj(w) placed at cells, by fft.js: rows then columns (the order PowerFft2 documents). */
function fftJsPower(nx: number, ny: number, cells: Int32Array, wr: Float64Array, wi: Float64Array): Float64Array {
  const fx = new FFT(nx), fy = new FFT(ny);
  const grid = new Float64Array(2 * nx * ny);
  for (let i = 0; i < cells.length; i++) {
    grid[2 * cells[i]!] = wr[i]!;
    grid[2 * cells[i]! + 1] = -wi[i]!;
  }
  const rowOut = new Float64Array(2 * nx);
  for (let r = 0; r < ny; r++) {
    const row = grid.subarray(2 * nx * r, 2 * nx * (r + 1));
    fx.transform(rowOut, row);
    row.set(rowOut);
  }
  const colIn = new Float64Array(2 * ny), colOut = new Float64Array(2 * ny);
  const power = new Float64Array(nx * ny);
  for (let c = 0; c < nx; c++) {
    for (let r = 0; r < ny; r++) {
      colIn[2 * r] = grid[2 * (r * nx + c)]!;
      colIn[2 * r + 1] = grid[2 * (r * nx + c) + 1]!;
    }
    fy.transform(colOut, colIn);
    for (let r = 0; r < ny; r++) power[r * nx + c] = colOut[2 * r]! ** 2 + colOut[2 * r + 1]! ** 2;
  }
  return power;
}

describe("the 2-D power spectrum (wasm/fft.ts)", () => {
  // sizes with an even and an odd power of two on each side: fft.js's two first passes
  const sizes = [[4, 4], [8, 16], [32, 8], [64, 128], [2, 32]] as const;
  it("equals fft.js's transforms bit for bit, and the DFT's defining sum to 1e-12 of the peak", () => {
    const r = mulberry32(5);
    for (const [nx, ny] of sizes) {
      const rows = Math.max(1, ny / 4), cols = Math.max(1, nx / 4);
      const n = rows * cols;
      const cells = Int32Array.from({ length: n }, (_, i) => Math.floor(i / cols) * nx + (i % cols));
      const wr = Float64Array.from({ length: n }, () => r() - 0.5), wi = Float64Array.from({ length: n }, () => r() - 0.5);
      const f = new PowerFft2(nx, ny, rows, { elements: n, usedCols: cols, windowCells: 16, windowSide: 4 });
      const got = f.run(cells, wr, wi).slice();
      expect(Array.from(got), `${nx}×${ny}`).toEqual(Array.from(fftJsPower(nx, ny, cells, wr, wi)));
      // |Σ w·e^{+2πi(m·x/nx + k·y/ny)}|² (the array factor's sign), at a few cells
      let peak = 0;
      for (const v of got) peak = Math.max(peak, v);
      for (const [m, k] of [[0, 0], [1, 0], [0, 1], [nx - 1, ny - 1], [nx >> 1, ny >> 2]] as const) {
        let re = 0, im = 0;
        for (let i = 0; i < n; i++) {
          const x = cells[i]! % nx, y = Math.floor(cells[i]! / nx);
          const a = 2 * Math.PI * ((m * x) / nx + (k * y) / ny);
          re += wr[i]! * Math.cos(a) - wi[i]! * Math.sin(a);
          im += wr[i]! * Math.sin(a) + wi[i]! * Math.cos(a);
        }
        expect(Math.abs(got[k * nx + m]! - (re * re + im * im)), `${nx}×${ny} cell (${m}, ${k})`).toBeLessThan(1e-12 * peak);
      }
    }
  });

  it("refuses sides that are not powers of two", () => {
    expect(() => new PowerFft2(12, 8, 2, { elements: 4, usedCols: 2, windowCells: 4, windowSide: 2 })).toThrow(/powers of two/);
  });
});

/** F(Δu, Δv) = Σ w·e^{jk(x·Δu + y·Δv)} by the direct sum (planar arrays). */
function directField(x: Float64Array, y: Float64Array, k: number, wr: Float64Array, wi: Float64Array, du: number, dv: number): [number, number] {
  let re = 0, im = 0;
  for (let i = 0; i < x.length; i++) {
    const a = k * (x[i]! * du + y[i]! * dv);
    re += wr[i]! * Math.cos(a) - wi[i]! * Math.sin(a);
    im += wr[i]! * Math.sin(a) + wi[i]! * Math.cos(a);
  }
  return [re, im];
}

describe("the exact array factor of planar arrays (wasm/evaluator.ts)", () => {
  const k = 2 * Math.PI; // λ = 1
  const r = mulberry32(11);
  const lattice = (cols: number, rows: number, d: number) => {
    const x = new Float64Array(cols * rows), y = new Float64Array(cols * rows);
    for (let j = 0; j < rows; j++) for (let i = 0; i < cols; i++) { x[j * cols + i] = i * d; y[j * cols + i] = j * d; }
    return { x, y };
  };
  const shuffled = (() => {
    // the same lattice, elements listed in a scrambled order (the evaluator's general path)
    const { x, y } = lattice(7, 5, 0.55);
    const idx = Array.from({ length: x.length }, (_, i) => i);
    for (let i = idx.length - 1; i > 0; i--) { const j = Math.floor(r() * (i + 1)); [idx[i], idx[j]] = [idx[j]!, idx[i]!]; }
    return { x: Float64Array.from(idx, (i) => x[i]!), y: Float64Array.from(idx, (i) => y[i]!) };
  })();
  const irregular = { x: Float64Array.from({ length: 30 }, () => 4 * r()), y: Float64Array.from({ length: 30 }, (_, i) => Math.floor(i / 6) * 0.6) };
  // phasor arguments k·x·Δu up to ~2900 rad: the kernel's own sincos (musl's range reduction) against Math.cos/sin
  const wide = lattice(6, 4, 97.3);
  const layouts = { "8×6 lattice": lattice(8, 6, 0.5), "7×5 lattice in scrambled order": shuffled, "30 elements at random x in 5 rows": irregular, "6×4 lattice 97.3 λ apart": wide };
  for (const [name, { x, y }] of Object.entries(layouts)) {
    it(`${name}: F equals the direct sum (1e-12 relative), |F|²'s derivatives its central differences (1e-5 relative)`, () => {
      const n = x.length;
      const ev = new AfEvaluator(x, y, new Float64Array(n), k);
      for (let i = 0; i < n; i++) { ev.wr[i] = r() - 0.5; ev.wi[i] = r() - 0.5; }
      const wr = ev.wr.slice(), wi = ev.wi.slice();
      const p = (du: number, dv: number) => { const [a, b] = directField(x, y, k, wr, wi, du, dv); return a * a + b * b; };
      for (const [du, dv] of [[0, 0], [0.013, -0.021], [0.31, 0.07], [-0.5, 0.45]] as const) {
        const [re, im] = ev.field(du, dv);
        const [dr, di] = directField(x, y, k, wr, wi, du, dv);
        const scale = Math.hypot(dr, di) + 1e-3;
        expect(Math.abs(re - dr) / scale, `${name} F at (${du}, ${dv})`).toBeLessThan(1e-12);
        expect(Math.abs(im - di) / scale, `${name} F at (${du}, ${dv})`).toBeLessThan(1e-12);
        const d = { ...ev.derivs(du, dv) };
        // the step shrinks with the aperture (λ = 1), whose pattern changes over ~1/extent
        const extent = Math.max(Math.max(...x) - Math.min(...x), Math.max(...y) - Math.min(...y));
        const h = 1e-4 * Math.min(1, 4 / extent);
        const fd = {
          p: p(du, dv),
          pu: (p(du + h, dv) - p(du - h, dv)) / (2 * h),
          pv: (p(du, dv + h) - p(du, dv - h)) / (2 * h),
          puu: (p(du + h, dv) - 2 * p(du, dv) + p(du - h, dv)) / (h * h),
          pvv: (p(du, dv + h) - 2 * p(du, dv) + p(du, dv - h)) / (h * h),
          puv: (p(du + h, dv + h) - p(du + h, dv - h) - p(du - h, dv + h) + p(du - h, dv - h)) / (4 * h * h),
        };
        const big = Math.max(Math.abs(fd.puu), Math.abs(fd.pvv), Math.abs(fd.puv), 1);
        expect(Math.abs(d.p - fd.p) / (fd.p + 1e-9)).toBeLessThan(1e-10);
        for (const key of ["pu", "pv"] as const) expect(Math.abs(d[key] - fd[key]) / (Math.abs(fd.pu) + Math.abs(fd.pv) + 1), `${name} ${key}`).toBeLessThan(1e-5);
        for (const key of ["puu", "pvv", "puv"] as const) expect(Math.abs(d[key] - fd[key]) / big, `${name} ${key}`).toBeLessThan(1e-5);
      }
    });
  }
});

describe("the horizon trace from a lattice's spectra (wasm/fft.ts, trace)", () => {
  it("every sample lies on the unit circle and holds |AF|² there (the direct sum, 1e-9 of the peak)", () => {
    const r = mulberry32(23);
    for (const lattice of [
      { kind: "rectangular", columns: 10, rows: 7, dx: "0.5 lambda", dy: "0.6 lambda" },
      { kind: "triangular", columns: 6, rows: 5, dx: "0.7 lambda", dy: "0.55 lambda", offset: 0.5 },
    ]) {
      const { plan } = load(baseScenario({ array: { lattice } }));
      const g = new PatternGrid(plan, 0);
      const el = plan.elements, n = el.count;
      const k = (2 * Math.PI * plan.frequenciesHz[0]!) / 299792458;
      const wr = Float64Array.from({ length: n }, () => r() - 0.5), wi = Float64Array.from({ length: n }, () => r() - 0.5);
      let peak = 0;
      for (let i = 0; i < n; i++) peak += Math.hypot(wr[i]!, wi[i]!);
      peak *= peak;
      // kept spectra (slot 1), then the window's own (slot 0) for a second set of weights
      const kept = g.spectra(wr, wi, true);
      const wr2 = wr.map((v) => -v), wi2 = wi.map((v) => 0.5 * v);
      for (const [u0, v0] of [[0, 0], [0.4, -0.3], [-0.95, 0.1]] as const) {
        const w0 = Math.sqrt(1 - u0 * u0 - v0 * v0);
        const win = { m0: 0, n0: 0, wm: 0, wn: 0, p: new Float64Array(g.cap), visible: new Uint8Array(g.cap) };
        g.fill(wr2, wi2, u0, v0, w0, win);
        for (const [s, a, b] of [[kept, wr, wi], [g.spectra(wr2, wi2, false), wr2, wi2]] as const) {
          const t = allocTrace(4);
          traceLattice(s, u0, v0, t);
          expect(t.n).toBeGreaterThan(20);
          let worst = 0;
          for (let q = 0; q < t.n; q++) {
            expect(Math.abs(Math.hypot(t.au[q]!, t.av[q]!) - 1)).toBeLessThan(1e-12);
            expect(t.au[q]! - u0 - t.du[q]!).toBeCloseTo(0, 12);
            // the spectra are of the weights as placed (no de-steering): AF at (du, dv) from the beam
            const [re, im] = directField(el.x, el.y, k, a, b, t.du[q]!, t.dv[q]!);
            worst = Math.max(worst, Math.abs(t.p[q]! - (re * re + im * im)));
          }
          expect(worst / peak, `${lattice.kind} beam (${u0}, ${v0}) slot ${s.slot}`).toBeLessThan(1e-9);
        }
      }
    }
  });
});

/** The flood's rule, plainly: cells reachable from start by 8-neighbour steps that never rise. */
function floodRef(p: Float64Array, w: number, h: number, start: number): Uint8Array {
  const mask = new Uint8Array(w * h);
  mask[start] = 1;
  for (let changed = true; changed; ) {
    changed = false;
    for (let c = 0; c < w * h; c++) {
      if (!mask[c]) continue;
      const ci = c % w, cj = Math.floor(c / w);
      for (let dj = -1; dj <= 1; dj++)
        for (let di = -1; di <= 1; di++) {
          const a = ci + di, b = cj + dj;
          if (a < 0 || b < 0 || a >= w || b >= h) continue;
          const q = b * w + a;
          if (!mask[q] && !(p[q]! > p[c]!)) { mask[q] = 1; changed = true; }
        }
    }
  }
  return mask;
}

/** The scan's rule, plainly (planar arrays): the CANDIDATES largest visible, non-main-lobe cells no visible non-main neighbour exceeds. */
function scanRef(p: Float64Array, visible: Uint8Array, mask: Uint8Array, w: number, h: number): { kept: number[]; bar: number } {
  const maxima: number[] = [];
  for (let b = 0; b < h; b++)
    for (let a = 0; a < w; a++) {
      const q = b * w + a;
      if (!visible[q] || mask[q]) continue;
      let isMax = true;
      for (let dj = -1; dj <= 1; dj++)
        for (let di = -1; di <= 1; di++) {
          const x = a + di, y = b + dj;
          if ((di || dj) && x >= 0 && y >= 0 && x < w && y < h && visible[y * w + x] && !mask[y * w + x] && p[y * w + x]! > p[q]!) isMax = false;
        }
      if (isMax) maxima.push(p[q]!);
    }
  // the contenders (lobe-kernel.ts): the LOBES_ALWAYS largest and any within LOBES_WITHIN of the largest
  maxima.sort((x, y) => y - x);
  const bar = contenderBar(maxima);
  return { kept: maxima.filter((v) => v >= bar).slice(0, CANDIDATES), bar };
}
function contenderBar(sorted: number[]): number {
  return sorted.length > LOBES_ALWAYS ? Math.min(sorted[LOBES_ALWAYS - 1]!, LOBES_WITHIN * sorted[0]!) : -Infinity;
}

describe("the main lobe's flood and the candidate scan (wasm/lobes.ts)", () => {
  it("mark the cells and keep the values the rules written out plainly give, on random windows with plateaus", () => {
    const r = mulberry32(3);
    for (let trial = 0; trial < 40; trial++) {
      const w = 5 + Math.floor(r() * 30), h = 4 + Math.floor(r() * 25), cells = w * h;
      // quantised values, so that equal neighbours (plateaus) occur
      const p = Float64Array.from({ length: cells }, () => Math.floor(r() * 12));
      const visible = Uint8Array.from({ length: cells }, () => (r() < 0.9 ? 1 : 0));
      const start = Math.floor(r() * cells);
      const mask = new Uint8Array(cells);
      floodMainLobe(p, w, h, start, mask);
      expect(Array.from(mask), `trial ${trial}`).toEqual(Array.from(floodRef(p, w, h, start)));
      const g = new LobeGridKernel(8);
      g.load(p, cells, visible);
      g.flood(w, h, start);
      const nc = g.scan(w, h, 0);
      const got = Array.from(g.candP.subarray(0, nc));
      // largest first; besides the contenders it may hold maxima that fell under the bar as it rose
      expect(got, `trial ${trial}: order`).toEqual([...got].sort((x, y) => y - x));
      const ref = scanRef(p, visible, mask, w, h);
      expect(got.filter((v) => v >= ref.bar), `trial ${trial}`).toEqual(ref.kept);
      for (let c = 0; c < nc; c++) expect(p[g.cand[c]!]).toBe(g.candP[c]);
    }
  });
});
