/**
 * Sampled |AF|² on a u-v grid around the beam direction, covering visible space.
 * Lattices, and element lists whose positions lie on one pitch along x and one along y
 * (gridEmbedding): a 2-D FFT of the de-steered weights embedded in a zero-padded grid
 * (a triangular lattice with offset ½ embeds in a grid of half the column pitch);
 * the grid is oversampled 4× against the aperture. Other geometries: a direct sum on
 * a grid sized from the aperture, with phasor tables per distinct coordinate (DirectSum).
 */
import type { Plan } from "../plan.js";
import { SPEED_OF_LIGHT } from "../units.js";
import { PowerFft2, nextPow2 } from "./fft.js";
import type { ElementPattern } from "../element.js";
import type { LatticeSpectra } from "./horizon.js";
import { distinct, type Distinct } from "./evaluator.js";
import { nufftCost, ScatteredSum } from "./nufft.js";

export const OVERSAMPLE = 4;

/** Extent (max − min) of element coordinates: the direct-sum grid's aperture along one axis. */
function span(a: Float64Array): number {
  let lo = Infinity, hi = -Infinity;
  for (const v of a) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  return hi - lo;
}

/**
 * The largest analysis grid: cells of the window over visible space that every pattern
 * is sampled on, (⌈2/du⌉ + 4)·(⌈2/dv⌉ + 4), at most 2048 × 2048. The cell is
 * λ/(4·aperture) (lattices: up to 2× finer, the FFT size being a power of two): 8 to 16
 * cells per wavelength of aperture along each axis, so the limit is reached between 128
 * and 256 λ along an axis. An analysis thread needs roughly 75 bytes a cell.
 */
export const MAX_ANALYSIS_CELLS = 2048 * 2048;
/**
 * Beams analysed in one run (build: frequencies × beams; sweep: × parts), each keeping 11
 * doubles of metrics in one shared array: 4 194 304 (~370 MB), as many as squint.csv rows.
 * 64 frequencies × 1 M beams on 2 elements ran on towards a 5.6 GB array.
 */
export const MAX_ANALYSED_BEAMS = 4_194_304;
/**
 * The extent along u and v that sets an element list's grid cell (gridShape and PatternGrid
 * alike): its span in x (y), plus twice its span in z. z turns the phase by k·z·w(u, v),
 * whose slope along u is k·z·u/w: a list 0.045 m wide with 0.3 m of z sampled at the x
 * span alone missed a −1.47 dB lobe (PSL −2.08 dB printed; numpy brute force). Twice the
 * z span resolves slopes up to tan θ = 2 (θ ≈ 63°); past it the exact refinement and the
 * horizon trace take over.
 */
function directExtent(el: { x: Float64Array; y: Float64Array; z: Float64Array }, lambda: number): [number, number] {
  const lz = 2 * span(el.z);
  return [span(el.x) + lz + lambda / 2, span(el.y) + lz + lambda / 2];
}

/** Most cells of a planar element list's ideal-pattern table (PatternGrid.offsetTable), 32 MB. */
const MAX_OFFSET_TABLE = 4_194_304;

/** Element lists also keep phasor tables, (2⌈2/du⌉ + 5)·(distinct x) + (2⌈2/dv⌉ + 5)·(distinct y) entries of 16 bytes (DirectSum). */
export const MAX_DIRECT_TABLE_ENTRIES = 2 ** 25;

/**
 * Where a planar array's elements sit on a regular grid of places, px × py apart (FFT
 * mode): element i at place (col[i], row[i]), cols × rows places. A lattice with offset 0
 * or ½ (a triangular one on a grid of half its column pitch); any other planar array
 * whose x and y values each lie on one pitch, each element on its own place, as a lattice
 * written out as elements.csv does: the positions must sit within 1e-10 of the pitch of
 * their place (the grid's samples then differ from the exact sum by < 1e-8 of the peak,
 * and every printed peak and lobe is refined on the exact positions anyway). null: the
 * direct sum (DirectSum).
 */
export interface GridEmbedding {
  /** 0 across an element list that is a line (one x or one y value): see acrossPitch */
  px: number;
  py: number;
  cols: number;
  rows: number;
  col: Int32Array;
  row: Int32Array;
}

/** Most places along an axis an element list is embedded with (more: the direct sum). */
const MAX_LIST_PLACES = 1024;

const embeddings = new WeakMap<Plan["elements"], GridEmbedding | null>();

export function gridEmbedding(plan: Plan): GridEmbedding | null {
  const el = plan.elements;
  let e = embeddings.get(el);
  if (e === undefined) embeddings.set(el, (e = findEmbedding(plan)));
  return e;
}

function findEmbedding(plan: Plan): GridEmbedding | null {
  const el = plan.elements, l = plan.lattice, n = el.count;
  if (l && (l.offset === 0 || l.offset === 0.5)) {
    const tri = l.offset === 0.5 && l.rows > 1;
    const col = new Int32Array(n), row = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      row[i] = el.row[i]!;
      col[i] = tri ? 2 * el.column[i]! + (el.row[i]! % 2) : el.column[i]!;
    }
    return { px: tri ? l.dx / 2 : l.dx, py: l.dy, cols: tri ? 2 * l.columns + 1 : l.columns, rows: l.rows, col, row };
  }
  if (n < 2 || !el.z.every((z) => z === 0)) return null;
  const gx = onePitch(el.x), gy = onePitch(el.y);
  if (!gx || !gy) return null;
  // a line: no pitch across it (0); the grid takes λ/2 there (acrossPitch), as for a
  // lattice of one row or column at λ/2: its pattern is constant across the line
  const px = gx.pitch, py = gy.pitch;
  const seen = new Set<number>();
  for (let i = 0; i < n; i++) {
    const q = gy.place[i]! * gx.places + gx.place[i]!;
    if (seen.has(q)) return null; // two elements on one place: the FFT grid holds one weight a place
    seen.add(q);
  }
  return { px, py, cols: gx.places, rows: gy.places, col: gx.place, row: gy.place };
}

/** The one pitch the values lie on (0: a single value) and each value's place; null if none fits. */
function onePitch(v: Float64Array): { pitch: number; places: number; place: Int32Array } | null {
  const d = Array.from(new Set(v)).sort((a, b) => a - b);
  const place = new Int32Array(v.length);
  if (d.length === 1) return { pitch: 0, places: 1, place };
  let gap = Infinity;
  for (let k = 1; k < d.length; k++) gap = Math.min(gap, d[k]! - d[k - 1]!);
  const span = d[d.length - 1]! - d[0]!;
  // the pitch: the smallest gap, or a whole fraction of it (places left empty: 0, 2, 5 → pitch 1)
  for (let j = 1; j <= 8; j++) {
    const steps = Math.round((span * j) / gap);
    if (!(steps + 1 <= MAX_LIST_PLACES)) return null;
    const pitch = span / steps;
    let fits = true;
    for (let i = 0; i < v.length && fits; i++) {
      const c = Math.round((v[i]! - d[0]!) / pitch);
      fits = Math.abs(v[i]! - (d[0]! + c * pitch)) <= 1e-10 * pitch;
      place[i] = c;
    }
    if (fits) return { pitch, places: steps + 1, place };
  }
  return null;
}

/**
 * The pitch the grid uses along an axis of an embedding: its own, or λ/2 across an element
 * list that is a line (pitch 0). A line's pattern is constant across it, so the grid there
 * needs no more than a lattice of one row at λ/2 has (dv = 0.5); borrowing the pitch along
 * the line made the grid as fine across as along it, and the refusal of a line too long
 * for the grid stated the pitch along it as its width (two elements 1 km apart at 28 GHz:
 * "186800 λ × 93400 λ").
 */
function acrossPitch(pitch: number, lambda: number): number {
  return pitch || lambda / 2;
}

export interface GridShape {
  mode: "fft" | "direct";
  du: number;
  dv: number;
  /** cells of the visible-space window (the analysis grid) */
  cells: number;
  /** direct mode: phasor table entries (0 for lattices) */
  tableEntries: number;
  /** the aperture along x and y in wavelengths, as the grid sees it */
  apertureX: number;
  apertureY: number;
}

/** The grid's cell and size for frequency fi (or any frequency fHz, e.g. a band point), without allocating it. */
export function gridShape(plan: Plan, fi: number, fHz: number = plan.frequenciesHz[fi]!): GridShape {
  const lambda = SPEED_OF_LIGHT / fHz;
  const g = gridEmbedding(plan);
  let du: number, dv: number, ax: number, ay: number, mode: "fft" | "direct";
  if (g) {
    mode = "fft";
    // resolution λ/(OVERSAMPLE·aperture) (aperture = places·pitch)
    const px = acrossPitch(g.px, lambda), py = acrossPitch(g.py, lambda);
    du = lambda / (px * nextPow2(OVERSAMPLE * g.cols));
    dv = lambda / (py * nextPow2(Math.max(OVERSAMPLE * g.rows, 1)));
    ax = (g.cols * px) / lambda;
    ay = (g.rows * py) / lambda;
  } else {
    mode = "direct";
    const el = plan.elements;
    const [lx, ly] = directExtent(el, lambda);
    du = lambda / (OVERSAMPLE * lx);
    dv = lambda / (OVERSAMPLE * ly);
    ax = lx / lambda;
    ay = ly / lambda;
  }
  const cells = (Math.ceil(2 / du) + 4) * (Math.ceil(2 / dv) + 4);
  // DirectSum's phasor tables: 2⌈2/du⌉ + 5 offsets per distinct x, 2⌈2/dv⌉ + 5 per distinct y
  // (none for the gridding, whose fine grid is a few windows' size)
  let tableEntries = 0;
  if (mode === "direct" && directMethod(plan.elements, (2 * Math.PI) / lambda, du, dv) !== "nufft") {
    const c = listCounts(plan.elements);
    tableEntries = (2 * (Math.ceil(2 / du) + 2) + 1) * c.x + (2 * (Math.ceil(2 / dv) + 2) + 1) * c.y;
  }
  return { mode, du, dv, cells, tableEntries, apertureX: ax, apertureY: ay };
}

/**
 * Why the analysis cannot run (a grid past MAX_ANALYSIS_CELLS or phasor tables past
 * MAX_DIRECT_TABLE_ENTRIES at some table frequency or band point), naming the frequency
 * and the aperture in wavelengths that cause it; null when it can.
 */
export function analysisSizeProblem(plan: Plan, opts: { band?: boolean } = {}): { frequencyIndex: number; message: string; band?: true } | null {
  // the table frequencies, then (unless opts.band is false: no band analysis runs) the band
  // points, each analysed on its own grid
  const points: [number, number, boolean][] = plan.frequenciesHz.map((f, fi) => [fi, f, false]);
  if (opts.band !== false) for (const f of plan.band?.frequenciesHz ?? []) points.push([0, f, true]);
  for (const [fi, f, isBand] of points) {
    const g = gridShape(plan, fi, f);
    const over = g.cells > MAX_ANALYSIS_CELLS ? `${g.cells.toExponential(2)} cells (limit ${MAX_ANALYSIS_CELLS}, 2048 × 2048)` : g.tableEntries > MAX_DIRECT_TABLE_ENTRIES ? `${g.tableEntries.toExponential(2)} phasor-table entries (limit ${MAX_DIRECT_TABLE_ENTRIES})` : null;
    if (!over) continue;
    const fTxt = f >= 1e12 ? `${+(f / 1e12).toPrecision(6)} THz` : f >= 1e9 ? `${+(f / 1e9).toPrecision(6)} GHz` : `${+(f / 1e6).toPrecision(6)} MHz`;
    const ap = `${+g.apertureX.toPrecision(4)} λ × ${+g.apertureY.toPrecision(4)} λ`;
    const fix = plan.quantizer.method === "optimized" && !isBand ? "the optimized quantizer searches on this grid, so use another quantizer (then --no-analysis builds the tables)" : isBand ? "narrow the band (or remove it), or build the tables without analysis (--no-analysis)" : "build the tables without analysis (--no-analysis)";
    return {
      frequencyIndex: fi,
      ...(isBand ? { band: true as const } : {}),
      message: `the analysis grid would need ${over}: at ${fTxt}${isBand ? " (a band point)" : ""} the array spans ${ap} (8 to 16 cells per wavelength of aperture along each axis: about 128 to 256 λ fit); ${fix}, or check the frequency and the element positions' units`,
    };
  }
  return null;
}

export interface PowerWindow {
  /** first offset index along u and v; cell (i, j) is Δu = (m0+i)·du, Δv = (n0+j)·dv */
  m0: number;
  n0: number;
  wm: number;
  wn: number;
  p: Float64Array;
  visible: Uint8Array;
}

/** The largest window's columns and rows for cells du × dv (visible space and a margin; frame()). */
function windowSides(du: number, dv: number): [number, number] {
  return [Math.ceil(2 / du) + 4, Math.ceil(2 / dv) + 4];
}

export function allocWindow(cap: number): PowerWindow {
  return { m0: 0, n0: 0, wm: 0, wn: 0, p: new Float64Array(cap), visible: new Uint8Array(cap) };
}

export class PatternGrid {
  readonly du: number;
  readonly dv: number;
  readonly mode: "fft" | "direct";
  readonly cap: number;
  private readonly k: number;
  // FFT mode
  private readonly fft: PowerFft2 | null = null;
  private readonly nx: number = 0;
  private readonly ny: number = 0;
  private readonly cell: Int32Array | null = null; // element → grid index
  private readonly px: number = 0;
  private readonly py: number = 0;
  // direct mode
  private readonly mMax: number = 0;
  private readonly nMax: number = 0;
  // direct mode: phasors per distinct coordinate (directSum())
  private direct: DirectSum | null = null;
  private readonly planar: boolean;

  constructor(private readonly plan: Plan, fi: number) {
    const shape = gridShape(plan, fi);
    if (shape.cells > MAX_ANALYSIS_CELLS || shape.tableEntries > MAX_DIRECT_TABLE_ENTRIES)
      throw new Error(`analysis grid past its limit (${shape.cells} cells, ${shape.tableEntries} table entries): callers check analysisSizeProblem() first`);
    const lambda = SPEED_OF_LIGHT / plan.frequenciesHz[fi]!;
    this.k = (2 * Math.PI) / lambda;
    const el = plan.elements;
    this.planar = el.z.every((z) => z === 0);
    const g = gridEmbedding(plan);
    if (g) {
      this.mode = "fft";
      // resolution λ/(OVERSAMPLE·aperture) (aperture = places·pitch); gridShape() has the same
      this.nx = nextPow2(OVERSAMPLE * g.cols);
      this.ny = nextPow2(Math.max(OVERSAMPLE * g.rows, 1));
      this.px = acrossPitch(g.px, lambda);
      this.py = acrossPitch(g.py, lambda);
      this.du = lambda / (this.px * this.nx);
      this.dv = lambda / (this.py * this.ny);
      const [wm, wn] = windowSides(this.du, this.dv);
      this.fft = new PowerFft2(this.nx, this.ny, g.rows, { elements: el.count, usedCols: g.cols, windowCells: wm * wn, windowSide: Math.max(wm, wn) });
      this.cell = new Int32Array(el.count);
      for (let i = 0; i < el.count; i++) this.cell[i] = g.row[i]! * this.nx + g.col[i]!;
    } else {
      this.mode = "direct";
      const [lx, ly] = directExtent(el, lambda);
      this.du = lambda / (OVERSAMPLE * lx);
      this.dv = lambda / (OVERSAMPLE * ly);
      this.mMax = Math.ceil(2 / this.du) + 2;
      this.nMax = Math.ceil(2 / this.dv) + 2;
    }
    const [wm, wn] = windowSides(this.du, this.dv);
    this.cap = wm * wn;
  }

  /**
   * Offsets window covering visible space for beam (u0, v0), with a one-cell margin.
   * A cell is visible iff u² + v² ≤ 1 (u = u0 + (m0+i)·du, v = v0 + (n0+j)·dv, in
   * floating point). Along a row u rises with i and the rounded u² is monotone in |u|,
   * so the visible cells of a row are one run: its ends are estimated from √(1 − v²)
   * and settled by that same test, and the row is written as three runs.
   */
  private frame(u0: number, v0: number, win: PowerWindow): void {
    const du = this.du, dv = this.dv;
    win.m0 = Math.floor((-1 - u0) / du) - 1;
    win.n0 = Math.floor((-1 - v0) / dv) - 1;
    win.wm = Math.floor((1 - u0) / du) + 2 - win.m0;
    win.wn = Math.floor((1 - v0) / dv) + 2 - win.n0;
    const { m0, wm } = win;
    const vis = (i: number, vv: number) => { const u = u0 + (m0 + i) * du; return u * u + vv <= 1; };
    for (let j = 0; j < win.wn; j++) {
      const v = v0 + (win.n0 + j) * dv;
      const vv = v * v;
      const o = j * wm;
      const h = Math.sqrt(Math.max(0, 1 - vv));
      // + 0: Math.ceil gives −0 for (−1, −0] (see inMain, horizon.ts)
      let lo = Math.max(0, Math.min(wm - 1, Math.ceil((-h - u0) / du) + 0 - m0));
      let hi = Math.max(0, Math.min(wm - 1, Math.floor((h - u0) / du) - m0));
      while (lo > 0 && vis(lo - 1, vv)) lo--;
      while (lo < wm && !vis(lo, vv)) lo++;
      if (lo === wm) { win.visible.fill(0, o, o + wm); continue; }
      if (hi < lo) hi = lo;
      while (hi + 1 < wm && vis(hi + 1, vv)) hi++;
      while (!vis(hi, vv)) hi--;
      win.visible.fill(0, o, o + lo);
      win.visible.fill(1, o + lo, o + hi + 1);
      win.visible.fill(0, o + hi + 1, o + wm);
    }
  }

  /**
   * Sample |F|² of de-steered weights (wr, wi) for beam (u0, v0, w0) into `win`.
   * Non-planar arrays include the z term exactly (direct mode).
   */
  /** [nx, ny] of the FFT grid (FFT mode). */
  get fftSize(): [number, number] {
    return [this.nx, this.ny];
  }

  /** FFT mode: |F|² on the whole periodic FFT grid, for weights that do not change from beam to beam. */
  periodicPower(wr: Float64Array, wi: Float64Array): Float64Array {
    if (this.mode !== "fft") throw new Error("periodicPower needs a lattice");
    return this.fft!.run(this.cell!, wr, wi).slice();
  }

  /**
   * FFT mode: the 1-D transforms the horizon trace needs (horizon.ts), held by the FFT:
   * with `keep` false those of the weights last given to fill(), whose weights (wr, wi)
   * must be, valid until the next fill(); with `keep` true transformed afresh and kept
   * until the next such call.
   */
  spectra(wr: Float64Array, wi: Float64Array, keep: boolean): LatticeSpectra {
    if (this.mode !== "fft") throw new Error("spectra need a lattice");
    const slot = this.fft!.spectra(this.cell!, wr, wi, keep);
    return { kpx: this.k * this.px, kdy: this.k * this.py, du: this.du, dv: this.dv, fft: this.fft!, slot };
  }

  private colIndex = new Int32Array(0);
  private rowIndex = new Int32Array(0);
  /** The periodic grid's column and row of each window column and row (after frame()). */
  private wrapIndex(win: PowerWindow): void {
    const { nx, ny } = this;
    if (this.colIndex.length < win.wm) this.colIndex = new Int32Array(win.wm);
    if (this.rowIndex.length < win.wn) this.rowIndex = new Int32Array(win.wn);
    for (let i = 0; i < win.wm; i++) this.colIndex[i] = (((win.m0 + i) % nx) + nx) % nx;
    for (let j = 0; j < win.wn; j++) this.rowIndex[j] = (((win.n0 + j) % ny) + ny) % ny;
  }

  /** Copy the window's cells out of a periodic FFT-grid power array. */
  private gather(win: PowerWindow, src: Float64Array): void {
    const { nx } = this;
    this.wrapIndex(win);
    const col = this.colIndex;
    for (let j = 0; j < win.wn; j++) {
      const rowOff = this.rowIndex[j]! * nx;
      const o = j * win.wm;
      for (let i = 0; i < win.wm; i++) win.p[o + i] = src[rowOff + col[i]!]!;
    }
  }

  /** FFT mode: fill the window of beam (u0, v0) from a periodicPower() array. */
  fillFromPeriodic(power: Float64Array, u0: number, v0: number, win: PowerWindow): void {
    this.frame(u0, v0, win);
    this.gather(win, power);
  }

  fill(wr: Float64Array, wi: Float64Array, u0: number, v0: number, w0: number, win: PowerWindow): void {
    this.frame(u0, v0, win);
    if (this.mode === "fft") {
      // the column pass writes |·|² straight into the window (no whole-grid power array)
      this.wrapIndex(win);
      this.fft!.runWindow(this.cell!, wr, wi, this.colIndex, this.rowIndex, win.wm, win.wn, win.p);
      return;
    }
    this.directSum().sum(wr, wi, u0, v0, w0, win);
  }

  /** How direct mode sums a window (DirectSum: by rows, by columns, gridding, element by element); null in FFT mode. */
  get directMethod(): "rows" | "columns" | "nufft" | "none" | null {
    return this.mode === "direct" ? this.directSum().method : null;
  }

  /** Direct mode's sum, made on first use (an analyzer that only refines peaks never needs its tables). */
  private directSum(): DirectSum {
    return (this.direct ??= new DirectSum(this.plan.elements, this.k, this.du, this.dv, this.mMax, this.nMax, this.planar));
  }

  /**
   * Direct mode, planar arrays: |F|² of weights that do not change from beam to beam on
   * every cell a window can take (offsets ±mMax, ±nMax), once; windows then copy from it
   * (fillFromTable), as FFT mode's periodicPower / fillFromPeriodic. null: not planar
   * (the z term depends on the beam), or a table past MAX_OFFSET_TABLE cells.
   */
  offsetTable(wr: Float64Array, wi: Float64Array): Float64Array | null {
    if (this.mode !== "direct" || !this.planar) return null;
    const W = 2 * this.mMax + 1, H = 2 * this.nMax + 1;
    // about four windows' cells: past MAX_OFFSET_TABLE (32 MB) the ideal is summed per beam
    if (W * H > MAX_OFFSET_TABLE) return null;
    const all: PowerWindow = { m0: -this.mMax, n0: -this.nMax, wm: W, wn: H, p: new Float64Array(W * H), visible: new Uint8Array(0) };
    this.directSum().sum(wr, wi, 0, 0, 1, all);
    return all.p;
  }

  /** Direct mode: fill the window of beam (u0, v0) from an offsetTable() array (offsets past ±mMax, ±nMax take the edge's, as fill's phasors do). */
  fillFromTable(table: Float64Array, u0: number, v0: number, win: PowerWindow): void {
    this.frame(u0, v0, win);
    const { mMax, nMax } = this;
    const W = 2 * mMax + 1;
    for (let j = 0; j < win.wn; j++) {
      const q = Math.max(-nMax, Math.min(nMax, win.n0 + j)) + nMax;
      const o = j * win.wm;
      for (let i = 0; i < win.wm; i++) win.p[o + i] = table[q * W + Math.max(-mMax, Math.min(mMax, win.m0 + i)) + mMax]!;
    }
  }
}

/** Distinct x and y values of an element list (DirectSum's phasor tables, the size limit, the horizon's series), counted once. */
const distinctCounts = new WeakMap<Plan["elements"], { x: number; y: number; spanX: number; spanY: number; planar: boolean }>();
export function listCounts(el: Plan["elements"]): { x: number; y: number; spanX: number; spanY: number; planar: boolean } {
  let c = distinctCounts.get(el);
  if (!c) distinctCounts.set(el, (c = { x: new Set(el.x).size, y: new Set(el.y).size, spanX: span(el.x), spanY: span(el.y), planar: el.z.every((z) => z === 0) }));
  return c;
}

/**
 * How DirectSum sums a window of a list with cells du × dv at wavenumber k: whichever of
 * the two passes by rows or by columns, the gridding (planar lists, nufft.ts) and element
 * by element costs fewest complex products a window (cells ~ the largest window's).
 */
function directMethod(el: Plan["elements"], k: number, du: number, dv: number): "rows" | "columns" | "nufft" | "none" {
  const { x: nxd, y: nyd, spanX, spanY, planar } = listCounts(el);
  const [wm, wn] = windowSides(du, dv);
  const n = el.count, cap = wm * wn, side = Math.sqrt(cap);
  const byRows = n * side + cap * nyd, byCols = n * side + cap * nxd, direct = cap * n;
  // the gridding's sources lie within ±k·span/2 radians a cell (nufft.ts)
  const gridding = planar ? nufftCost(n, (k * spanX * du) / (2 * Math.PI), (k * spanY * dv) / (2 * Math.PI), wm, wn) : Infinity;
  const best = Math.min(byRows, byCols, direct, gridding);
  return !planar || best === direct ? "none" : best === gridding ? "nufft" : byRows <= byCols ? "rows" : "columns";
}

/**
 * Direct mode's sum F(m·du, n·dv) = Σ_e w_e·e^{jk(x_e·m·du + y_e·n·dv)} (times the z term
 * of non-planar arrays) over a window's cells, with phasors per distinct x and per distinct
 * y (an element list on a lattice has only `columns` and `rows` of them). Planar arrays
 * whose elements share coordinates sum in two passes, exactly: per distinct y (row) b and
 * window column i, G_b(i) = Σ_{e in row b} w_e·e^{jk·x_e·m_i·du}, then F(i, j) =
 * Σ_b G_b(i)·e^{jk·y_b·n_j·dv}; elements·columns + cells·rows products instead of
 * cells·elements (or the same with x and y exchanged, whichever is fewer). A 64 × 64
 * lattice given as elements.csv took 3.6 s a beam (cells × elements), the grid of a
 * lattice's FFT mode being out of its reach. Otherwise (all coordinates distinct, or z ≠ 0)
 * the sum runs element by element.
 */
class DirectSum {
  private readonly dx: Distinct;
  private readonly dy: Distinct;
  /** phasors: ex[(m + mMax)·nxd + a] for distinct x a, ey[(q + nMax)·nyd + b] for distinct y b */
  private readonly exr: Float64Array;
  private readonly exi: Float64Array;
  private readonly eyr: Float64Array;
  private readonly eyi: Float64Array;
  /** the two-pass order: by rows (distinct y) or by columns (distinct x); gridding (ScatteredSum); none: element by element */
  readonly method: "rows" | "columns" | "nufft" | "none";
  private scattered: ScatteredSum | null = null;
  private gr = new Float64Array(0);
  private gi = new Float64Array(0);

  constructor(private readonly el: Plan["elements"], private readonly k: number, private readonly du: number, private readonly dv: number, private readonly mMax: number, private readonly nMax: number, private readonly planar: boolean) {
    this.dx = distinct(el.x);
    this.dy = distinct(el.y);
    const nxd = this.dx.values.length, nyd = this.dy.values.length;
    this.method = directMethod(el, k, du, dv);
    // the gridding needs no phasor tables
    const tables = this.method !== "nufft";
    const W = tables ? 2 * mMax + 1 : 0, H = tables ? 2 * nMax + 1 : 0;
    this.exr = new Float64Array(W * nxd);
    this.exi = new Float64Array(W * nxd);
    this.eyr = new Float64Array(H * nyd);
    this.eyi = new Float64Array(H * nyd);
    if (!tables) return;
    for (let m = -mMax; m <= mMax; m++)
      for (let a = 0; a < nxd; a++) {
        const t = k * this.dx.values[a]! * m * du;
        this.exr[(m + mMax) * nxd + a] = Math.cos(t);
        this.exi[(m + mMax) * nxd + a] = Math.sin(t);
      }
    for (let q = -nMax; q <= nMax; q++)
      for (let b = 0; b < nyd; b++) {
        const t = k * this.dy.values[b]! * q * dv;
        this.eyr[(q + nMax) * nyd + b] = Math.cos(t);
        this.eyi[(q + nMax) * nyd + b] = Math.sin(t);
      }
  }

  /** |F|² on the window's cells (win.m0, n0, wm, wn; `visible` is not read). */
  sum(wr: Float64Array, wi: Float64Array, u0: number, v0: number, w0: number, win: PowerWindow): void {
    if (this.method === "none") this.elementByElement(wr, wi, u0, v0, w0, win);
    else if (this.method === "nufft") (this.scattered ??= this.gridding()).sum(wr, wi, win);
    else this.twoPass(wr, wi, win, this.method === "rows");
  }

  /** The gridding for windows of up to the largest window's cells. */
  private gridding(): ScatteredSum {
    const [wm, wn] = windowSides(this.du, this.dv);
    return new ScatteredSum(this.el.x, this.el.y, this.k, this.du, this.dv, wm, wn);
  }

  private twoPass(wr: Float64Array, wi: Float64Array, win: PowerWindow, byRows: boolean): void {
    const { mMax, nMax, el } = this;
    // "rows": groups are distinct y (b), the first pass runs along window columns (x phasors)
    const first = byRows ? this.dx : this.dy, group = byRows ? this.dy : this.dx;
    const fr = byRows ? this.exr : this.eyr, fi = byRows ? this.exi : this.eyi;
    const sr = byRows ? this.eyr : this.exr, si = byRows ? this.eyi : this.exi;
    const nf = first.values.length, ng = group.values.length;
    const fMax = byRows ? mMax : nMax, sMax = byRows ? nMax : mMax;
    const f0 = byRows ? win.m0 : win.n0, s0 = byRows ? win.n0 : win.m0;
    const nF = byRows ? win.wm : win.wn, nS = byRows ? win.wn : win.wm;
    if (this.gr.length < ng * nF) { this.gr = new Float64Array(ng * nF); this.gi = new Float64Array(ng * nF); }
    const { gr, gi } = this;
    gr.fill(0, 0, ng * nF);
    gi.fill(0, 0, ng * nF);
    // pass 1: G_g(f) = Σ_{e in group g} w_e·phasor(first coordinate of e, offset f)
    for (let f = 0; f < nF; f++) {
      const fo = (Math.max(-fMax, Math.min(fMax, f0 + f)) + fMax) * nf;
      for (let e = 0; e < el.count; e++) {
        const a = fo + first.index[e]!, o = group.index[e]! * nF + f;
        const pr = fr[a]!, pi = fi[a]!, xr = wr[e]!, xi = wi[e]!;
        gr[o] = gr[o]! + (xr * pr - xi * pi);
        gi[o] = gi[o]! + (xr * pi + xi * pr);
      }
    }
    // pass 2: F(f, s) = Σ_g G_g(f)·phasor(group g's coordinate, offset s)
    const p = win.p, wm = win.wm;
    for (let s = 0; s < nS; s++) {
      const so = (Math.max(-sMax, Math.min(sMax, s0 + s)) + sMax) * ng;
      for (let f = 0; f < nF; f++) {
        let re = 0, im = 0;
        for (let g = 0; g < ng; g++) {
          const cr = sr[so + g]!, ci = si[so + g]!, xr = gr[g * nF + f]!, xi = gi[g * nF + f]!;
          re += xr * cr - xi * ci;
          im += xr * ci + xi * cr;
        }
        p[byRows ? s * wm + f : f * wm + s] = re * re + im * im;
      }
    }
  }

  private elementByElement(wr: Float64Array, wi: Float64Array, u0: number, v0: number, w0: number, win: PowerWindow): void {
    const { exr, exi, eyr, eyi, mMax, nMax, el, k, du, dv } = this;
    const nxd = this.dx.values.length, nyd = this.dy.values.length;
    const xi = this.dx.index, yi = this.dy.index;
    const n = el.count;
    if (this.planar) {
      // per row, each element's weight times its y phasor; per cell then one complex
      // product-sum with its x phasor
      if (this.gr.length < n) { this.gr = new Float64Array(n); this.gi = new Float64Array(n); }
      const { gr, gi } = this;
      for (let j = 0; j < win.wn; j++) {
        const qo = (Math.max(-nMax, Math.min(nMax, win.n0 + j)) + nMax) * nyd;
        for (let e = 0; e < n; e++) {
          const b = qo + yi[e]!;
          gr[e] = wr[e]! * eyr[b]! - wi[e]! * eyi[b]!;
          gi[e] = wr[e]! * eyi[b]! + wi[e]! * eyr[b]!;
        }
        for (let i = 0; i < win.wm; i++) {
          const mo = (Math.max(-mMax, Math.min(mMax, win.m0 + i)) + mMax) * nxd;
          let sr = 0, si = 0;
          for (let e = 0; e < n; e++) {
            const a = mo + xi[e]!;
            sr += gr[e]! * exr[a]! - gi[e]! * exi[a]!;
            si += gr[e]! * exi[a]! + gi[e]! * exr[a]!;
          }
          win.p[j * win.wm + i] = sr * sr + si * si;
        }
      }
      return;
    }
    for (let j = 0; j < win.wn; j++) {
      const q = win.n0 + j;
      const qo = (Math.max(-nMax, Math.min(nMax, q)) + nMax) * nyd;
      const v = v0 + q * dv;
      for (let i = 0; i < win.wm; i++) {
        const m = win.m0 + i;
        const mo = (Math.max(-mMax, Math.min(mMax, m)) + mMax) * nxd;
        // z ≠ 0 (planar lists returned above): the z term at this cell
        const u = u0 + m * du;
        const s = 1 - u * u - v * v;
        const dz = (s > 0 ? Math.sqrt(s) : 0) - w0;
        let sr = 0, si = 0;
        for (let e = 0; e < n; e++) {
          const a = mo + xi[e]!, b = qo + yi[e]!;
          let er = exr[a]! * eyr[b]! - exi[a]! * eyi[b]!;
          let ei = exr[a]! * eyi[b]! + exi[a]! * eyr[b]!;
          if (dz !== 0) {
            const t = k * el.z[e]! * dz;
            const c = Math.cos(t), s = Math.sin(t);
            const r2 = er * c - ei * s;
            ei = er * s + ei * c;
            er = r2;
          }
          sr += wr[e]! * er - wi[e]! * ei;
          si += wr[e]! * ei + wi[e]! * er;
        }
        win.p[j * win.wm + i] = sr * sr + si * si;
      }
    }
  }
}

/**
 * The element power pattern on the cells of a framed window (cell (i, j) at the
 * absolute direction u0 + (m0+i)·du, v0 + (n0+j)·dv); 0 past the horizon.
 */
export function elementWindow(e: ElementPattern, win: PowerWindow, u0: number, v0: number, du: number, dv: number, out: Float64Array): void {
  for (let j = 0; j < win.wn; j++) {
    const v = v0 + (win.n0 + j) * dv;
    const o = j * win.wm;
    for (let i = 0; i < win.wm; i++) out[o + i] = win.visible[o + i] ? e.gridPower(u0 + (win.m0 + i) * du, v) : 0;
  }
}

/** Weight the sampled |AF|² cell by cell (the total pattern |AF|²·E). */
export function applyWeight(win: PowerWindow, weight: Float64Array): void {
  const n = win.wm * win.wn;
  for (let q = 0; q < n; q++) win.p[q]! *= weight[q]!;
}
