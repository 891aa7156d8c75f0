/**
 * The array factor of a planar element list with scattered positions on a window of grid
 * cells, by a non-uniform FFT (type 1: scattered sources, uniform outputs) with Gaussian
 * gridding (Dutt & Rokhlin 1993; Greengard & Lee, "Accelerating the nonuniform fast
 * Fourier transform", SIAM Review 46 (2004) 443–454: the parameters and error bound
 * below are theirs, from memory; tested against the direct sum, see pattern.test.ts):
 *
 *   F(m, n) = Σ_e c_e·e^{i(X_e·m + Y_e·n)},  X_e = k·(x_e − x̄)·du, Y_e = k·(y_e − ȳ)·dv
 *
 * for the integer offsets (m, n) of a window's cells (the grid of DirectSum, grid.ts).
 * Each source is spread onto a fine periodic grid of Mx × My points as a Gaussian,
 * e^{−(x − X_e)²/(4τ)}, truncated to its 2·SPREAD nearest points per axis; one 2-D FFT
 * (PowerFft2, the lattices' WebAssembly transform) then gives every mode at once, and
 * dividing by the Gaussian's Fourier transform, √(τ/π)·e^{−m²τ} per axis, leaves F. The
 * fine grid has at least MIN_SIGMA (1.9) times as many points as the window has cells
 * (σ = M_fine / M), and
 * τ = π·SPREAD / (M²·σ·(σ − ½)): the truncated Gaussian's tail, e^{−12π(σ − ½)/σ} ≤ 5e−13,
 * times the correction at the window's edge (≤ e^{6π/(σ(σ − ½))}) bounds the error of F
 * relative to Σ|c_e|; |F|² measured against the direct sum: within 5e−12 of the peak
 * power over 60 random lists (by hand), held to 2e−11 in pattern.test.ts. The grid only
 * seeds the search: every printed peak and lobe is refined on the exact positions. |F|²
 * is what the analysis needs, so the common phase factors (centring the positions, the
 * fine grid's origin) drop out.
 *
 * Costs: per window, elements × (2·SPREAD)² products to spread them, the fine grid's
 * occupied rows (the sources lie within ±π/4, a quarter of the fine grid, since the
 * analysis grid's cell is λ/(4·aperture)) and the window's columns transformed, against
 * elements × cells for the direct sum: 1024 scattered elements over 32 λ, ~20× fewer
 * products (DirectSum picks the cheaper, nufftCost).
 */
import { nextPow2, PowerFft2 } from "./fft.js";
import type { PowerWindow } from "./grid.js";

/** Points each side of a source its Gaussian is spread onto, per axis (Greengard & Lee's M_sp for ~12 digits). */
export const SPREAD = 12;

/**
 * The fine grid's least oversampling σ (a power of two at or above σ·M): at 1.9 the tail
 * e^{−12π(σ − ½)/σ} is 7e−13 and the edge correction e^{6π/(σ(σ − ½))} 1200, against
 * 5e−13 and 540 at σ = 2, and a 260-cell window takes a 512-point fine grid, not 1024.
 */
const MIN_SIGMA = 1.9;

/** One axis of the gridding: modes (window cells) M, fine points Mf, τ, and each source's place in fine-grid points. */
interface Axis {
  modes: number;
  fine: number;
  tau: number;
  /** per source: its coordinate in fine points from the first spread point (0 … used − 1) */
  at: Float64Array;
  /** fine points the spread sources occupy, from 0 */
  used: number;
  /** per source: X_e (radians a cell) */
  x: Float64Array;
}

function axis(coord: Float64Array, kd: number, modes: number): Axis {
  let lo = Infinity, hi = -Infinity;
  for (const c of coord) { lo = Math.min(lo, c); hi = Math.max(hi, c); }
  const mid = 0.5 * (lo + hi);
  const x = Float64Array.from(coord, (c) => kd * (c - mid));
  // |X_e| ≤ k·span/2·du < π/4 for the analysis grid; the fine grid holds the sources'
  // range plus the spread each side without wrapping around, and is at least MIN_SIGMA × the modes
  const range = kd * (hi - lo);
  let fine = nextPow2(Math.ceil(MIN_SIGMA * modes));
  while ((range * fine) / (2 * Math.PI) + 2 * SPREAD + 2 > fine) fine *= 2;
  const sigma = fine / modes;
  const tau = (Math.PI * SPREAD) / (modes * modes * sigma * (sigma - 0.5));
  const at = Float64Array.from(x, (X) => X * (fine / (2 * Math.PI)));
  let first = Infinity;
  for (const t of at) first = Math.min(first, Math.floor(t) - SPREAD + 1);
  for (let e = 0; e < at.length; e++) at[e] = at[e]! - first;
  let used = 0;
  for (const t of at) used = Math.max(used, Math.floor(t) + SPREAD + 1);
  return { modes, fine, tau, at, used, x };
}

/** Complex products the gridding costs for one window of modesX × modesY cells (DirectSum's choice). */
export function nufftCost(elements: number, spanX: number, spanY: number, modesX: number, modesY: number): number {
  const fx = nextPow2(Math.ceil(MIN_SIGMA * modesX)), fy = nextPow2(Math.ceil(MIN_SIGMA * modesY));
  // rows the sources occupy (a quarter of the fine grid at most, plus the spread)
  const rows = Math.min(fy, Math.ceil(spanY * fy) + 2 * SPREAD + 2);
  return elements * 4 * SPREAD * SPREAD + (rows * fx * Math.log2(fx)) / 2 + (modesX * fy * Math.log2(fy)) / 2 + modesX * modesY;
}

export class ScatteredSum {
  private readonly ax: Axis;
  private readonly ay: Axis;
  private readonly fft: PowerFft2;
  private readonly cells: Int32Array;
  private readonly vr: Float64Array;
  private readonly vi: Float64Array;
  private readonly gx = new Float64Array(2 * SPREAD);
  private readonly gy = new Float64Array(2 * SPREAD);
  /** a tile of at most modes × modes cells, the FFT's column and row of each of its cells, and per-axis corrections */
  private readonly tile: Float64Array;
  private readonly col: Int32Array;
  private readonly row: Int32Array;
  private readonly fixX: Float64Array;
  private readonly fixY: Float64Array;

  /** x, y: positions (m); k: wavenumber; du, dv: the grid's cell; modesX × modesY: the largest tile (a window's cells). */
  constructor(x: Float64Array, y: Float64Array, k: number, du: number, dv: number, modesX: number, modesY: number) {
    this.ax = axis(x, k * du, modesX);
    this.ay = axis(y, k * dv, modesY);
    const { ax, ay } = this;
    const cols = ax.used, rows = ay.used;
    this.cells = new Int32Array(cols * rows);
    for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) this.cells[r * cols + c] = r * ax.fine + c;
    this.vr = new Float64Array(cols * rows);
    this.vi = new Float64Array(cols * rows);
    this.fft = new PowerFft2(ax.fine, ay.fine, rows, { elements: cols * rows, usedCols: 1, windowCells: modesX * modesY, windowSide: Math.max(modesX, modesY) });
    this.tile = new Float64Array(modesX * modesY);
    this.col = new Int32Array(modesX);
    this.row = new Int32Array(modesY);
    this.fixX = new Float64Array(modesX);
    this.fixY = new Float64Array(modesY);
  }

  /** |F|² on the window's cells (win.m0, n0, wm, wn), in tiles of at most modesX × modesY cells. */
  sum(wr: Float64Array, wi: Float64Array, win: PowerWindow): void {
    const { modes: mx } = this.ax, { modes: my } = this.ay;
    for (let j0 = 0; j0 < win.wn; j0 += my)
      for (let i0 = 0; i0 < win.wm; i0 += mx) {
        const tm = Math.min(mx, win.wm - i0), tn = Math.min(my, win.wn - j0);
        this.sumTile(wr, wi, win.m0 + i0, win.n0 + j0, tm, tn);
        for (let j = 0; j < tn; j++) win.p.set(this.tile.subarray(j * tm, (j + 1) * tm), (j0 + j) * win.wm + i0);
      }
  }

  /** |F|² on tm × tn cells from offset (m0, n0) into this.tile (row-major, tm wide). */
  private sumTile(wr: Float64Array, wi: Float64Array, m0: number, n0: number, tm: number, tn: number): void {
    const { ax, ay, vr, vi, gx, gy } = this;
    const cols = ax.used;
    // the tile's centre cell is mode 0: each source's weight turned by e^{i(X·mc + Y·nc)}
    const mc = m0 + (tm >> 1), nc = n0 + (tn >> 1);
    vr.fill(0);
    vi.fill(0);
    const ex = 1 / (4 * ax.tau), ey = 1 / (4 * ay.tau);
    const hx = (2 * Math.PI) / ax.fine, hy = (2 * Math.PI) / ay.fine;
    for (let e = 0; e < wr.length; e++) {
      const a = wr[e]!, b = wi[e]!;
      if (a === 0 && b === 0) continue;
      const t = ax.x[e]! * mc + ay.x[e]! * nc;
      const c = Math.cos(t), s = Math.sin(t);
      const cr = a * c - b * s, ci = a * s + b * c;
      // the Gaussian at the 2·SPREAD fine points nearest the source, per axis
      const tx = ax.at[e]!, ty = ay.at[e]!;
      const px = Math.floor(tx), py = Math.floor(ty);
      for (let q = 0; q < 2 * SPREAD; q++) {
        const dx = (px - SPREAD + 1 + q - tx) * hx, dy = (py - SPREAD + 1 + q - ty) * hy;
        gx[q] = Math.exp(-dx * dx * ex);
        gy[q] = Math.exp(-dy * dy * ey);
      }
      for (let r = 0; r < 2 * SPREAD; r++) {
        const o = (py - SPREAD + 1 + r) * cols + px - SPREAD + 1;
        const yr = cr * gy[r]!, yi = ci * gy[r]!;
        for (let q = 0; q < 2 * SPREAD; q++) {
          vr[o + q] = vr[o + q]! + yr * gx[q]!;
          vi[o + q] = vi[o + q]! + yi * gx[q]!;
        }
      }
    }
    // mode m (cell m0 + i, m = m0 + i − mc) sits at FFT column m mod fine; |F|² = |FFT|²·(π/τ)·e^{2m²τ}/fine² per axis
    for (let i = 0; i < tm; i++) {
      const m = m0 + i - mc;
      this.col[i] = ((m % ax.fine) + ax.fine) % ax.fine;
      this.fixX[i] = ((Math.PI / ax.tau) * Math.exp(2 * m * m * ax.tau)) / (ax.fine * ax.fine);
    }
    for (let j = 0; j < tn; j++) {
      const n = n0 + j - nc;
      this.row[j] = ((n % ay.fine) + ay.fine) % ay.fine;
      this.fixY[j] = ((Math.PI / ay.tau) * Math.exp(2 * n * n * ay.tau)) / (ay.fine * ay.fine);
    }
    const p = this.tile;
    this.fft.runWindow(this.cells, vr, vi, this.col, this.row, tm, tn, p);
    for (let j = 0; j < tn; j++) {
      const fy = this.fixY[j]!;
      for (let i = 0; i < tm; i++) p[j * tm + i] = p[j * tm + i]! * this.fixX[i]! * fy;
    }
  }
}
