declare module "fft.js" {
  /** fft.js (indutny): radix-4 complex FFT on interleaved [re, im, …] arrays. */
  export default class FFT {
    constructor(size: number);
    readonly size: number;
    createComplexArray(): number[];
    /** Forward transform, X[k] = Σ x[n]·exp(−2πi·n·k/N); `out` must not alias `data`. */
    transform(out: ArrayLike<number> & { [i: number]: number }, data: ArrayLike<number>): void;
    inverseTransform(out: ArrayLike<number> & { [i: number]: number }, data: ArrayLike<number>): void;
  }
}
