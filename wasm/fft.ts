// AssemblyScript source of the analysis's 2-D power-spectrum kernels (src/core/pattern/fft.ts).
// Compiled ahead of time to WebAssembly by scripts/build-wasm.mjs; float64 throughout.
// The 1-D transform is fft.js's radix-4 forward transform (lib/fft.js, _transform4 with
// inv = 1), operation for operation, so the spectra are bit-identical to fft.js's.
// All arrays live in the instance's linear memory at byte offsets the JS side assigns.

// @ts-nocheck: AssemblyScript types (f64, i32, load, store), not TypeScript's

// JavaScript's own Math.cos and Math.sin (imported), so that the horizon trace's phasors are
// those of the TypeScript it replaced, bit for bit.
@external("env", "cos") declare function jsCos(x: f64): f64;
@external("env", "sin") declare function jsSin(x: f64): f64;

/** out ← FFT(data), n complex points interleaved; table: fft.js's twiddles (cos, −sin of πi/n), bitrev: its permutation, width: its initial width. */
function fft(out: usize, data: usize, n: i32, table: usize, bitrev: usize, width: i32): void {
  const size = n << 1;
  let step = 1 << width;
  let len = (size / step) << 1;
  if (len == 4) {
    for (let outOff = 0, t = 0; outOff < size; outOff += len, t++) {
      const off = load<i32>(bitrev + (<usize>t << 2));
      const e = data + (<usize>off << 3);
      const o = data + (<usize>(off + step) << 3);
      const evenR = load<f64>(e), evenI = load<f64>(e, 8);
      const oddR = load<f64>(o), oddI = load<f64>(o, 8);
      const p = out + (<usize>outOff << 3);
      store<f64>(p, evenR + oddR);
      store<f64>(p, evenI + oddI, 8);
      store<f64>(p, evenR - oddR, 16);
      store<f64>(p, evenI - oddI, 24);
    }
  } else {
    for (let outOff = 0, t = 0; outOff < size; outOff += len, t++) {
      const off = load<i32>(bitrev + (<usize>t << 2));
      const a = data + (<usize>off << 3);
      const b = data + (<usize>(off + step) << 3);
      const c = data + (<usize>(off + 2 * step) << 3);
      const d = data + (<usize>(off + 3 * step) << 3);
      const Ar = load<f64>(a), Ai = load<f64>(a, 8);
      const Br = load<f64>(b), Bi = load<f64>(b, 8);
      const Cr = load<f64>(c), Ci = load<f64>(c, 8);
      const Dr = load<f64>(d), Di = load<f64>(d, 8);
      const T0r = Ar + Cr, T0i = Ai + Ci;
      const T1r = Ar - Cr, T1i = Ai - Ci;
      const T2r = Br + Dr, T2i = Bi + Di;
      const T3r = Br - Dr, T3i = Bi - Di;
      const p = out + (<usize>outOff << 3);
      store<f64>(p, T0r + T2r);
      store<f64>(p, T0i + T2i, 8);
      store<f64>(p, T1r + T3i, 16);
      store<f64>(p, T1i - T3r, 24);
      store<f64>(p, T0r - T2r, 32);
      store<f64>(p, T0i - T2i, 40);
      store<f64>(p, T1r - T3i, 48);
      store<f64>(p, T1i + T3r, 56);
    }
  }
  for (step >>= 2; step >= 2; step >>= 2) {
    len = (size / step) << 1;
    const quarterLen = len >>> 2;
    for (let outOff = 0; outOff < size; outOff += len) {
      const limit = outOff + quarterLen;
      for (let i = outOff, k = 0; i < limit; i += 2, k += step) {
        const A = out + (<usize>i << 3);
        const B = A + (<usize>quarterLen << 3);
        const C = B + (<usize>quarterLen << 3);
        const D = C + (<usize>quarterLen << 3);
        const Ar = load<f64>(A), Ai = load<f64>(A, 8);
        const Br = load<f64>(B), Bi = load<f64>(B, 8);
        const Cr = load<f64>(C), Ci = load<f64>(C, 8);
        const Dr = load<f64>(D), Di = load<f64>(D, 8);
        const tb = table + (<usize>k << 3);
        const tc = table + (<usize>(2 * k) << 3);
        const td = table + (<usize>(3 * k) << 3);
        const tableBr = load<f64>(tb), tableBi = load<f64>(tb, 8);
        const MBr = Br * tableBr - Bi * tableBi;
        const MBi = Br * tableBi + Bi * tableBr;
        const tableCr = load<f64>(tc), tableCi = load<f64>(tc, 8);
        const MCr = Cr * tableCr - Ci * tableCi;
        const MCi = Cr * tableCi + Ci * tableCr;
        const tableDr = load<f64>(td), tableDi = load<f64>(td, 8);
        const MDr = Dr * tableDr - Di * tableDi;
        const MDi = Dr * tableDi + Di * tableDr;
        const T0r = Ar + MCr, T0i = Ai + MCi;
        const T1r = Ar - MCr, T1i = Ai - MCi;
        const T2r = MBr + MDr, T2i = MBi + MDi;
        const T3r = MBr - MDr, T3i = MBi - MDi;
        store<f64>(A, T0r + T2r);
        store<f64>(A, T0i + T2i, 8);
        store<f64>(B, T1r + T3i);
        store<f64>(B, T1i - T3r, 8);
        store<f64>(C, T0r - T2r);
        store<f64>(C, T0i - T2i, 8);
        store<f64>(D, T1r - T3i);
        store<f64>(D, T1i + T3r, 8);
      }
    }
  }
}

// The 2-D power spectrum of one instance (PowerFft2 in src/core/pattern/fft.ts): sizes and
// the byte offsets of its arrays, set once by setup().
let nx = 0, ny = 0, usedRows = 0;
let tableX: usize = 0, bitrevX: usize = 0, widthX = 0;
let tableY: usize = 0, bitrevY: usize = 0, widthY = 0;
let grid: usize = 0, rowOut: usize = 0, colIn: usize = 0, colOut: usize = 0;
let byCol: usize = 0, byColRun: usize = 0, power: usize = 0;
let usedCols = 0, colCur: usize = 0, keptRT: usize = 0, keptC: usize = 0;
let cells: usize = 0, wr: usize = 0, wi: usize = 0;
let runId = 0;

/** Lays out the arrays from byte `base` (8-aligned); returns the end. */
export function setup(nx_: i32, ny_: i32, usedRows_: i32, usedCols_: i32, widthX_: i32, widthY_: i32, base: usize): usize {
  nx = nx_; ny = ny_; usedRows = usedRows_; usedCols = usedCols_; widthX = widthX_; widthY = widthY_;
  let p = base;
  tableX = p; p += <usize>(2 * nx) << 3;
  tableY = p; p += <usize>(2 * ny) << 3;
  grid = p; p += <usize>(2 * nx * usedRows) << 3;
  rowOut = p; p += <usize>(2 * nx) << 3;
  colIn = p; p += <usize>(2 * ny) << 3;
  colOut = p; p += <usize>(2 * ny) << 3;
  byCol = p; p += <usize>(2 * usedRows * nx) << 3;
  power = p; p += <usize>(nx * ny) << 3;
  colCur = p; p += <usize>(2 * ny * usedCols) << 3;
  keptRT = p; p += <usize>(2 * usedRows * nx) << 3;
  keptC = p; p += <usize>(2 * ny * usedCols) << 3;
  bitrevX = p; p += <usize>nx << 2;
  bitrevY = p; p += <usize>ny << 2;
  byColRun = p; p += <usize>nx << 2;
  memory.fill(byColRun, 0xff, <usize>nx << 2);
  runId = 0;
  return p;
}
/** Byte offsets for the JS side's views, by index. */
export function offset(i: i32): usize {
  switch (i) {
    case 0: return tableX;
    case 1: return tableY;
    case 2: return grid;
    case 3: return byCol;
    case 4: return power;
    case 5: return bitrevX;
    case 6: return bitrevY;
    case 7: return colOut;
    case 8: return colCur;
  }
  return 0;
}
/** Where the element inputs go: cells (i32), wr, wi (f64), n each, from byte `at`. */
export function inputs(at: usize, n: i32): void {
  cells = at;
  wr = at + (<usize>n << 2);
  wr = (wr + 7) & ~(<usize>7);
  wi = wr + (<usize>n << 3);
}

/** Row transforms of the weights (conj) in place in grid; the column input's zero tail reset. */
export function rows(n: i32): void {
  memory.fill(grid, 0, <usize>(2 * nx * usedRows) << 3);
  for (let i = 0; i < n; i++) {
    const c = grid + (<usize>load<i32>(cells + (<usize>i << 2)) << 4);
    store<f64>(c, load<f64>(wr + (<usize>i << 3)));
    store<f64>(c, -load<f64>(wi + (<usize>i << 3)), 8);
  }
  const rowBytes = <usize>(2 * nx) << 3;
  for (let r = 0; r < usedRows; r++) {
    const row = grid + <usize>r * rowBytes;
    fft(rowOut, row, nx, tableX, bitrevX, widthX);
    memory.copy(row, rowOut, rowBytes);
  }
  memory.fill(colIn + (<usize>(2 * usedRows) << 3), 0, <usize>(2 * (ny - usedRows)) << 3);
  runId++;
}

/** Column c's transform into colOut (after rows()); its row spectra kept in byCol. */
function column(c: i32): void {
  let a = grid + (<usize>(2 * c) << 3);
  let b = byCol + (<usize>(2 * usedRows * c) << 3);
  const stride = <usize>(2 * nx) << 3;
  for (let r = 0; r < usedRows; r++, a += stride, b += 16) {
    const re = load<f64>(a), im = load<f64>(a, 8);
    store<f64>(colIn + (<usize>(2 * r) << 3), re);
    store<f64>(colIn + (<usize>(2 * r) << 3), im, 8);
    store<f64>(b, re);
    store<f64>(b, im, 8);
  }
  store<i32>(byColRun + (<usize>c << 2), runId);
  fft(colOut, colIn, ny, tableY, bitrevY, widthY);
}

/** |·|² of every grid cell into power, row-major. */
export function run(n: i32): void {
  rows(n);
  for (let c = 0; c < nx; c++) {
    column(c);
    for (let r = 0; r < ny; r++) {
      const q = colOut + (<usize>(2 * r) << 3);
      const re = load<f64>(q), im = load<f64>(q, 8);
      store<f64>(power + (<usize>(r * nx + c) << 3), re * re + im * im);
    }
  }
}

/** The same |·|² into a window of wm × wn cells at `out` (row-major): column i is grid column col[i], row j grid row row[j]. */
export function runWindow(n: i32, col: usize, row: usize, wm: i32, wn: i32, out: usize): void {
  rows(n);
  for (let i = 0; i < wm; i++) {
    const ci = load<i32>(col + (<usize>i << 2));
    if (i >= nx && load<i32>(col + (<usize>(i - nx) << 2)) == ci) {
      for (let j = 0, o = i; j < wn; j++, o += wm) store<f64>(out + (<usize>o << 3), load<f64>(out + (<usize>(o - nx) << 3)));
      continue;
    }
    column(ci);
    for (let j = 0, o = i; j < wn; j++, o += wm) {
      const q = colOut + (<usize>(2 * load<i32>(row + (<usize>j << 2))) << 3);
      const re = load<f64>(q), im = load<f64>(q, 8);
      store<f64>(out + (<usize>o << 3), re * re + im * im);
    }
  }
}

/** Fill byCol's columns the column pass skipped (after run() or runWindow()). */
export function byColumn(): void {
  const stride = <usize>(2 * nx) << 3;
  for (let c = 0; c < nx; c++) {
    if (load<i32>(byColRun + (<usize>c << 2)) == runId) continue;
    let a = grid + (<usize>(2 * c) << 3);
    let b = byCol + (<usize>(2 * usedRows * c) << 3);
    for (let r = 0; r < usedRows; r++, a += stride, b += 16) {
      store<f64>(b, load<f64>(a));
      store<f64>(b, load<f64>(a, 8), 8);
    }
    store<i32>(byColRun + (<usize>c << 2), runId);
  }
}

/** Column transforms of the weights (conj) for grid columns < usedCols, column c at 2·ny·c in colCur. */
export function columnSpectra(n: i32): void {
  const out = colCur;
  memory.fill(out, 0, <usize>(2 * ny * usedCols) << 3);
  for (let i = 0; i < n; i++) {
    const q = load<i32>(cells + (<usize>i << 2));
    const c = q % nx, r = (q - c) / nx;
    const p = out + (<usize>(2 * (c * ny + r)) << 3);
    store<f64>(p, load<f64>(wr + (<usize>i << 3)));
    store<f64>(p, -load<f64>(wi + (<usize>i << 3)), 8);
  }
  const colBytes = <usize>(2 * ny) << 3;
  for (let c = 0; c < usedCols; c++) {
    const col = out + <usize>c * colBytes;
    memory.copy(colIn, col, colBytes);
    fft(colOut, colIn, ny, tableY, bitrevY, widthY);
    memory.copy(col, colOut, colBytes);
  }
}

/** Keep the spectra of the last weights (byCol, colCur) as slot 1 (after byColumn() and columnSpectra()). */
export function keep(): void {
  memory.copy(keptRT, byCol, <usize>(2 * usedRows * nx) << 3);
  memory.copy(keptC, colCur, <usize>(2 * ny * usedCols) << 3);
}

/** |Σ_i s_i·e^{−jθi}|² for s interleaved at s + 8·(off + stride·i), i < n (horizon.ts). */
function phasedSum(s: usize, off: i32, stride: i32, n: i32, theta: f64): f64 {
  const cr = jsCos(theta), ci = -jsSin(theta);
  let er = 1.0, ei = 0.0, re = 0.0, im = 0.0;
  for (let i = 0, o = off; i < n; i++, o += stride) {
    const q = s + (<usize>o << 3);
    const a = load<f64>(q), b = load<f64>(q, 8);
    re += a * er - b * ei;
    im += a * ei + b * er;
    const t = er * cr - ei * ci;
    ei = er * ci + ei * cr;
    er = t;
  }
  return re * re + im * im;
}

@inline function wrap(m: i32, n: i32): i32 { return ((m % n) + n) % n; }

/**
 * The horizon trace of beam (u0, v0) from the spectra of slot 0 (the last weights) or 1
 * (kept): traceLattice in src/core/pattern/horizon.ts, which gives the arguments. Writes
 * samples into five arrays of `cap` float64 from `out` (Δu, Δv, u, v, |F|²); returns
 * their number.
 */
export function trace(slot: i32, u0: f64, v0: f64, du: f64, dv: f64, sa: f64, ca: f64, mLo: i32, mHi: i32, nLo: i32, nHi: i32, kdy: f64, kpx: f64, out: usize, cap: i32): i32 {
  const RT = slot == 0 ? byCol : keptRT;
  const C = slot == 0 ? colCur : keptC;
  const tu = out, tv = out + (<usize>cap << 3), au = tv + (<usize>cap << 3), av = au + (<usize>cap << 3), p = av + (<usize>cap << 3);
  const rows = usedRows, cols = usedCols;
  let k = 0;
  for (let m = mLo; m <= mHi; m++) {
    // bottom, α ∈ [−3π/4, −π/4]
    const u = u0 + <f64>m * du;
    if (!(abs(u) <= ca)) continue;
    const v = -sqrt(max(0.0, 1 - u * u));
    const o = <usize>k << 3;
    store<f64>(tu + o, <f64>m * du); store<f64>(tv + o, v - v0); store<f64>(au + o, u); store<f64>(av + o, v);
    store<f64>(p + o, phasedSum(RT, 2 * rows * wrap(m, nx), 2, rows, kdy * (v - v0)));
    k++;
  }
  for (let n = nLo; n <= nHi; n++) {
    // right
    const v = v0 + <f64>n * dv;
    if (!(abs(v) < sa)) continue;
    const u = sqrt(max(0.0, 1 - v * v));
    const o = <usize>k << 3;
    store<f64>(tu + o, u - u0); store<f64>(tv + o, <f64>n * dv); store<f64>(au + o, u); store<f64>(av + o, v);
    store<f64>(p + o, phasedSum(C, 2 * wrap(n, ny), 2 * ny, cols, kpx * (u - u0)));
    k++;
  }
  for (let m = mHi; m >= mLo; m--) {
    // top
    const u = u0 + <f64>m * du;
    if (!(abs(u) <= ca)) continue;
    const v = sqrt(max(0.0, 1 - u * u));
    const o = <usize>k << 3;
    store<f64>(tu + o, <f64>m * du); store<f64>(tv + o, v - v0); store<f64>(au + o, u); store<f64>(av + o, v);
    store<f64>(p + o, phasedSum(RT, 2 * rows * wrap(m, nx), 2, rows, kdy * (v - v0)));
    k++;
  }
  for (let n = nHi; n >= nLo; n--) {
    // left
    const v = v0 + <f64>n * dv;
    if (!(abs(v) < sa)) continue;
    const u = -sqrt(max(0.0, 1 - v * v));
    const o = <usize>k << 3;
    store<f64>(tu + o, u - u0); store<f64>(tv + o, <f64>n * dv); store<f64>(au + o, u); store<f64>(av + o, v);
    store<f64>(p + o, phasedSum(C, 2 * wrap(n, ny), 2 * ny, cols, kpx * (u - u0)));
    k++;
  }
  return k;
}
