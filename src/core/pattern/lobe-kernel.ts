/**
 * The lobe search's grid-wide passes in WebAssembly (wasm/lobes.ts): the main lobe's flood
 * and the scan for sidelobe candidates, over a window copied into the kernel's memory.
 */
import { KERNEL_BASE, kernelInstance } from "./kernels.js";
import { WASM_BASE64 } from "./wasm/lobes.js";

interface LobesKernels {
  memory: WebAssembly.Memory;
  flood(p: number, w: number, h: number, start: number, mask: number, stack: number): void;
  scan(p: number, visible: number, mask: number, wm: number, wn: number, cand: number, candP: number, line: number, always: number, within: number): number;
}

/**
 * Which sampled maxima can hold the largest lobe: every one within this factor (3 dB) of
 * the largest, and at least the LOBES_ALWAYS largest, whatever their level. A lobe's
 * samples have been seen 1.2 dB under its peak (a narrow lobe, below); with only the six
 * largest maxima refined, a pattern with more lobes than that within a scallop of each
 * other lost its true largest one: a 24 × 20 lattice given as elements.csv, Taylor −28 dB,
 * n̄ = 4, printed an ideal PSL of −28.228 dB where the brute force and the same lattice
 * given as a lattice give −28.177 (the four first lobes sampled lower than eight others).
 * Used alike by the grid's candidates (LobeFinder.analyse, up to CANDIDATES of them), the
 * ideal pattern's lobes (ideal-lobes.ts) and the horizon trace's maxima (horizon.ts).
 */
export const LOBES_WITHIN = 0.5;
/** Grid maxima always considered (LOBES_WITHIN). */
export const LOBES_ALWAYS = 6;

/** How many sidelobe candidates the scan keeps at most, the largest by grid value (wasm/lobes.ts has the same; LOBES_WITHIN picks the contenders among them). */
export const CANDIDATES = 48;

const align8 = (b: number) => (b + 7) & ~7;

/** A window of up to `cells` cells in a kernel instance's memory: its power, visibility and the flood's mask. */
export class LobeGridKernel {
  private readonly k: LobesKernels;
  private cells = 0;
  private at = { p: 0, visible: 0, mask: 0, stack: 0, cand: 0, candP: 0 };
  /** views on the kernel's memory, remade when it grows (mask: the last flood's) */
  p!: Float64Array;
  visible!: Uint8Array;
  mask!: Uint8Array;
  cand!: Int32Array;
  candP!: Float64Array;

  constructor(cells: number) {
    this.k = kernelInstance<LobesKernels>(WASM_BASE64, LobeGridKernel.bytes(cells));
    this.layout(cells);
  }

  private static bytes(cells: number): number {
    return KERNEL_BASE + 8 * cells + 8 * CANDIDATES + align8(4 * CANDIDATES) + align8(4 * cells) + 2 * align8(cells);
  }

  /** Room for `cells` cells (the memory grows when needed; views are remade). */
  ensure(cells: number): void {
    if (cells > this.cells) this.layout(cells);
  }

  private layout(cells: number): void {
    const need = LobeGridKernel.bytes(cells);
    const have = this.k.memory.buffer.byteLength;
    if (need > have) this.k.memory.grow(Math.ceil((need - have) / 65536));
    let o = KERNEL_BASE;
    const take = (bytes: number) => { const a = o; o += align8(bytes); return a; };
    this.at = { p: take(8 * cells), candP: take(8 * CANDIDATES), cand: take(4 * CANDIDATES), stack: take(4 * cells), visible: take(cells), mask: take(cells) };
    const mem = this.k.memory.buffer;
    this.p = new Float64Array(mem, this.at.p, cells);
    this.visible = new Uint8Array(mem, this.at.visible, cells);
    this.mask = new Uint8Array(mem, this.at.mask, cells);
    this.cand = new Int32Array(mem, this.at.cand, CANDIDATES);
    this.candP = new Float64Array(mem, this.at.candP, CANDIDATES);
    this.cells = cells;
  }

  /** Copy a w × h window's power (and visibility) in. */
  load(p: Float64Array, n: number, visible?: Uint8Array): void {
    this.ensure(n);
    // whole arrays where they fit (no subarray a call)
    this.p.set(p.length <= this.p.length ? p : p.subarray(0, n));
    if (visible) this.visible.set(visible.length <= this.visible.length ? visible : visible.subarray(0, n));
  }

  /** The main lobe's monotone flood from `start` over the loaded w × h power, into `mask`. */
  flood(w: number, h: number, start: number): void {
    this.k.flood(this.at.p, w, h, start, this.at.mask, this.at.stack);
  }

  /** The sidelobe candidates that can be contenders (after flood()) into cand/candP, largest first; returns how many. line: 0 planar, 1 row array, 2 column array. */
  scan(wm: number, wn: number, line: number): number {
    return this.k.scan(this.at.p, this.at.visible, this.at.mask, wm, wn, this.at.cand, this.at.candP, line, LOBES_ALWAYS, LOBES_WITHIN);
  }
}
