/**
 * 2-D power spectrum of zero-padded weights. The transforms run in WebAssembly
 * (wasm/fft.ts, compiled ahead of time): fft.js's radix-4 forward transform ported
 * operation for operation, so the spectra are bit-identical to fft.js's (tested), in
 * float64, with no JIT warm-up, and 1.2–2.5× faster than fft.js even when warm
 * (DEVELOPERS.md, "Analysis speed"). Arrays are interleaved complex.
 *
 * The array factor needs exp(+2πi·n·k/N); the transform computes exp(−2πi·n·k/N). Since
 * Σ w·e^{+iθ} = conj(Σ conj(w)·e^{−iθ}), transforming conj(w) gives the same |·|².
 */
import { KERNEL_BASE, kernelInstance } from "./kernels.js";
import { WASM_BASE64 } from "./wasm/fft.js";

export function nextPow2(x: number): number {
  let n = 1;
  while (n < x) n <<= 1;
  return n;
}

interface FftKernels {
  memory: WebAssembly.Memory;
  setup(nx: number, ny: number, usedRows: number, usedCols: number, widthX: number, widthY: number, base: number): number;
  offset(i: number): number;
  inputs(at: number, n: number): void;
  run(n: number): void;
  runWindow(n: number, col: number, row: number, wm: number, wn: number, out: number): void;
  rows(n: number): void;
  byColumn(): void;
  columnSpectra(n: number): void;
  keep(): void;
  trace(slot: number, u0: number, v0: number, du: number, dv: number, sa: number, ca: number, mLo: number, mHi: number, nLo: number, nHi: number, kdy: number, kpx: number, out: number, cap: number): number;
}

/** fft.js's twiddle table (cos, −sin of π·i/n), digit-reversal table and first pass width for n points (lib/fft.js, its constructor). */
export function fftTables(n: number): { table: Float64Array; bitrev: Int32Array; width: number } {
  const table = new Float64Array(2 * n);
  for (let i = 0; i < table.length; i += 2) {
    const angle = (Math.PI * i) / n;
    table[i] = Math.cos(angle);
    table[i + 1] = -Math.sin(angle);
  }
  let power = 0;
  for (let t = 1; n > t; t <<= 1) power++;
  const width = power % 2 === 0 ? power - 1 : power;
  const bitrev = new Int32Array(1 << width);
  for (let j = 0; j < bitrev.length; j++)
    for (let shift = 0; shift < width; shift += 2) bitrev[j]! |= ((j >>> shift) & 3) << (width - shift - 2);
  return { table, bitrev, width };
}

/** What a PowerFft2 sizes its memory for once (more is taken when asked, at a cost). */
export interface FftScratch {
  /** elements (weights per call) */
  elements: number;
  /** grid columns the column spectra are kept for (the lattice's) */
  usedCols: number;
  /** cells of the largest window runWindow() writes, and its longest side */
  windowCells: number;
  windowSide: number;
}

const align8 = (b: number) => (b + 7) & ~7;

/** Room a PowerFft2's memory has after its fixed arrays: elements, window side and cells, trace samples. */
interface Room {
  n: number;
  side: number;
  cells: number;
  trace: number;
}

export class PowerFft2 {
  private readonly k: FftKernels;
  private readonly free: number;
  private room: Room = { n: 0, side: 0, cells: 0, trace: 0 };
  /** byte offsets of the window's column and row indices, its cells, and the trace's five arrays */
  private at = { col: 0, row: 0, win: 0, trace: 0 };
  // views on the kernel's memory, remade by layout() (a memory that grows detaches them)
  private cellsV!: Int32Array;
  private wrV!: Float64Array;
  private wiV!: Float64Array;
  private powerV!: Float64Array;
  private colV!: Int32Array;
  private rowV!: Int32Array;
  private winV!: Float64Array;
  private traceV!: Float64Array[];

  constructor(readonly nx: number, readonly ny: number, readonly usedRows: number, scratch: FftScratch) {
    if (nx < 2 || ny < 2 || (nx & (nx - 1)) !== 0 || (ny & (ny - 1)) !== 0) throw new Error(`FFT grid ${nx} × ${ny}: sides must be powers of two, at least 2`);
    const tx = fftTables(nx), ty = fftTables(ny);
    const uc = scratch.usedCols;
    const fixed = 8 * (2 * nx + 2 * ny + 2 * nx * usedRows + 2 * nx + 4 * ny + 2 * usedRows * nx + nx * ny + 4 * ny * uc + 2 * usedRows * nx) + 4 * (3 * nx + ny);
    this.free = align8(KERNEL_BASE + fixed);
    // a horizon trace has at most 2·(columns crossed) + 2·(rows crossed) samples: ≤ 4·side + 8
    const room = { n: scratch.elements, side: scratch.windowSide + 1, cells: scratch.windowCells, trace: 4 * scratch.windowSide + 8 };
    this.k = kernelInstance<FftKernels>(WASM_BASE64, this.free + PowerFft2.roomBytes(room), { env: { cos: Math.cos, sin: Math.sin } });
    const end = this.k.setup(nx, ny, usedRows, uc, tx.width, ty.width, KERNEL_BASE);
    if (end > this.free) throw new Error("PowerFft2: kernel layout larger than reserved");
    const mem = this.k.memory.buffer;
    new Float64Array(mem, this.k.offset(0), 2 * nx).set(tx.table);
    new Float64Array(mem, this.k.offset(1), 2 * ny).set(ty.table);
    new Int32Array(mem, this.k.offset(5), tx.bitrev.length).set(tx.bitrev);
    new Int32Array(mem, this.k.offset(6), ty.bitrev.length).set(ty.bitrev);
    this.layout(room);
  }

  private static roomBytes(r: Room): number {
    return align8(4 * r.n) + 16 * r.n + 2 * align8(4 * r.side) + 8 * r.cells + 40 * r.trace;
  }

  /** Lay out the inputs, the window and the trace after the fixed arrays; views (re)made. */
  private layout(room: Room): void {
    const end = this.free + PowerFft2.roomBytes(room);
    const have = this.k.memory.buffer.byteLength;
    if (end > have) this.k.memory.grow(Math.ceil((end - have) / 65536));
    this.room = room;
    const { n, side, cells, trace } = room;
    this.k.inputs(this.free, n);
    const mem = this.k.memory.buffer;
    let o = this.free;
    const take = (bytes: number) => { const a = o; o += align8(bytes); return a; };
    const cellsAt = take(4 * n), wrAt = take(8 * n), wiAt = take(8 * n);
    this.at = { col: take(4 * side), row: take(4 * side), win: take(8 * cells), trace: take(40 * trace) };
    this.cellsV = new Int32Array(mem, cellsAt, n);
    this.wrV = new Float64Array(mem, wrAt, n);
    this.wiV = new Float64Array(mem, wiAt, n);
    this.powerV = new Float64Array(mem, this.k.offset(4), this.nx * this.ny);
    this.colV = new Int32Array(mem, this.at.col, side);
    this.rowV = new Int32Array(mem, this.at.row, side);
    this.winV = new Float64Array(mem, this.at.win, cells);
    this.traceV = [0, 1, 2, 3, 4].map((i) => new Float64Array(mem, this.at.trace + 8 * trace * i, trace));
  }

  /** More room when a call needs it (the memory grows; views remade). */
  private ensure(n: number, side: number, cells: number, trace: number): void {
    const r = this.room;
    if (n !== r.n || side > r.side || cells > r.cells || trace > r.trace)
      this.layout({ n, side: Math.max(side, r.side), cells: Math.max(cells, r.cells), trace: Math.max(trace, r.trace) });
  }

  /** The weights into the kernel's memory. */
  private load(cells: Int32Array, wr: Float64Array, wi: Float64Array): void {
    const n = cells.length;
    this.ensure(n, 0, 0, 0);
    this.cellsV.set(cells);
    this.wrV.set(wr.length === n ? wr : wr.subarray(0, n));
    this.wiV.set(wi.length === n ? wi : wi.subarray(0, n));
  }

  /** Samples a horizon trace can hold without a new layout (callers size their arrays to it). */
  get traceRoom(): number {
    return this.room.trace;
  }

  /** |Σ_cells w·exp(+2πi(mx/nx + ny'/ny))|² for every (m, n), weights given per cell index (row·nx + column); valid until the next call. */
  run(cells: Int32Array, wr: Float64Array, wi: Float64Array): Float64Array {
    this.load(cells, wr, wi);
    this.k.run(cells.length);
    return this.powerV;
  }

  /**
   * The same |·|², written straight into a window of wm × wn cells (row-major): window
   * column i is grid column col[i], window row j grid row row[j]. Only the grid columns
   * the window shows are transformed; a column shown twice (windows wider than the grid)
   * is copied from its first copy.
   */
  runWindow(cells: Int32Array, wr: Float64Array, wi: Float64Array, col: Int32Array, row: Int32Array, wm: number, wn: number, out: Float64Array): void {
    this.ensure(cells.length, Math.max(wm, wn), wm * wn, 0);
    this.load(cells, wr, wi);
    // whole arrays where they fit (no subarray a call: a 1-element array's build is all such calls)
    const { colV, rowV, winV } = this;
    colV.set(col.length <= colV.length ? col : col.subarray(0, wm));
    rowV.set(row.length <= rowV.length ? row : row.subarray(0, wn));
    this.k.runWindow(cells.length, this.at.col, this.at.row, wm, wn, this.at.win);
    out.set(winV.length <= out.length ? winV : winV.subarray(0, wm * wn));
  }

  /**
   * The 1-D transforms the horizon trace needs, of weights (wr, wi): slot 0 for the weights
   * last given to runWindow() (valid until the next call), or `keep` (the weights
   * transformed afresh) in slot 1, which stays until the next keep. Returns the slot.
   */
  spectra(cells: Int32Array, wr: Float64Array, wi: Float64Array, keep: boolean): 0 | 1 {
    const n = cells.length;
    if (keep) {
      this.load(cells, wr, wi);
      this.k.rows(n);
    }
    this.k.columnSpectra(n);
    this.k.byColumn();
    if (!keep) return 0;
    this.k.keep();
    return 1;
  }

  /**
   * The horizon trace (horizon.ts, traceLattice, which gives the arguments) from a slot's
   * spectra into `out`'s du, dv, au, av and p (each ≥ cap long); returns the sample count.
   */
  trace(slot: 0 | 1, u0: number, v0: number, du: number, dv: number, sa: number, ca: number, mLo: number, mHi: number, nLo: number, nHi: number, kdy: number, kpx: number, cap: number, out: { du: Float64Array; dv: Float64Array; au: Float64Array; av: Float64Array; p: Float64Array }): number {
    this.ensure(this.room.n, 0, 0, cap);
    const room = this.room.trace;
    const k = this.k.trace(slot, u0, v0, du, dv, sa, ca, mLo, mHi, nLo, nHi, kdy, kpx, this.at.trace, room);
    const [tu, tv, au, av, tp] = this.traceV;
    // whole arrays where they fit (no subarray a call)
    const whole = out.du.length >= room && out.dv.length >= room && out.au.length >= room && out.av.length >= room && out.p.length >= room;
    out.du.set(whole ? tu! : tu!.subarray(0, k));
    out.dv.set(whole ? tv! : tv!.subarray(0, k));
    out.au.set(whole ? au! : au!.subarray(0, k));
    out.av.set(whole ? av! : av!.subarray(0, k));
    out.p.set(whole ? tp! : tp!.subarray(0, k));
    return k;
  }
}
