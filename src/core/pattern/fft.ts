/**
 * In-place iterative radix-2 complex FFT on split Float64Arrays, with twiddles and
 * the bit-reversal permutation built once per size. Sign +1 computes
 * X[k] = Σ x[n]·exp(+2πi·n·k/N) (the array-factor sign), without the 1/N.
 * Chosen over fft.js by measurement: see `npm run bench` and DEVELOPERS.md.
 */
export class Fft {
  readonly n: number;
  private readonly cos: Float64Array;
  private readonly sin: Float64Array;
  private readonly rev: Uint32Array;
  constructor(n: number) {
    if (n < 1 || (n & (n - 1)) !== 0) throw new Error(`FFT size ${n} is not a power of two`);
    this.n = n;
    this.cos = new Float64Array(n / 2);
    this.sin = new Float64Array(n / 2);
    for (let k = 0; k < n / 2; k++) {
      this.cos[k] = Math.cos((2 * Math.PI * k) / n);
      this.sin[k] = Math.sin((2 * Math.PI * k) / n);
    }
    this.rev = new Uint32Array(n);
    const bits = Math.log2(n);
    for (let i = 0; i < n; i++) {
      let r = 0;
      for (let b = 0; b < bits; b++) r |= ((i >> b) & 1) << (bits - 1 - b);
      this.rev[i] = r;
    }
  }

  /** Transform re/im at offset `off` with element stride `stride` (stride 1 for rows). */
  transform(re: Float64Array, im: Float64Array, off = 0, stride = 1): void {
    const n = this.n;
    const rev = this.rev;
    for (let i = 0; i < n; i++) {
      const j = rev[i]!;
      if (j > i) {
        const a = off + i * stride;
        const b = off + j * stride;
        const tr = re[a]!;
        re[a] = re[b]!;
        re[b] = tr;
        const ti = im[a]!;
        im[a] = im[b]!;
        im[b] = ti;
      }
    }
    const cs = this.cos;
    const sn = this.sin;
    for (let size = 2; size <= n; size <<= 1) {
      const half = size >> 1;
      const step = n / size;
      for (let start = 0; start < n; start += size) {
        for (let k = 0; k < half; k++) {
          const wr = cs[k * step]!;
          const wi = sn[k * step]!;
          const a = off + (start + k) * stride;
          const b = a + half * stride;
          const xr = re[b]! * wr - im[b]! * wi;
          const xi = re[b]! * wi + im[b]! * wr;
          re[b] = re[a]! - xr;
          im[b] = im[a]! - xi;
          re[a] = re[a]! + xr;
          im[a] = im[a]! + xi;
        }
      }
    }
  }
}

export function nextPow2(x: number): number {
  let n = 1;
  while (n < x) n <<= 1;
  return n;
}

/**
 * 2-D transform of an nx × ny grid (row-major, x fastest) whose rows at and above
 * `usedRows` are zero: those rows are skipped in the first pass.
 */
export class Fft2 {
  readonly fx: Fft;
  readonly fy: Fft;
  constructor(readonly nx: number, readonly ny: number) {
    this.fx = new Fft(nx);
    this.fy = nx === ny ? this.fx : new Fft(ny);
  }
  transform(re: Float64Array, im: Float64Array, usedRows: number): void {
    for (let r = 0; r < usedRows; r++) this.fx.transform(re, im, r * this.nx, 1);
    for (let c = 0; c < this.nx; c++) this.fy.transform(re, im, c, this.nx);
  }
}
