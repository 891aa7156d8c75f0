/**
 * The ideal pattern of a lattice, once per frequency. Its de-steered weights do not
 * depend on the beam, so |AF_ideal(d̂ + Δ)|² is one fixed function I(Δ): its main lobe
 * (monotone flood from Δ = 0) and its lobe peaks are found once on an unwrapped Δ-grid
 * covering every beam's visible disc (|Δu|, |Δv| ≤ 2), and refined on demand (cached).
 * Per beam only the visible disc changes:
 *   PSL_ideal = max( lobes whose exact peak lies in the disc,
 *                    the maximum along the horizon circle (horizon.ts) ).
 * Lobes are visited in decreasing grid value and the search stops LOBES_WITHIN (3 dB)
 * below the best visible one found, as in LobeFinder (lobes.ts).
 */
import type { AfEvaluator } from "./evaluator.js";
import { floodMainLobe, hillClimb, QUAD_MARGIN, refine } from "./lobes.js";
import { LOBES_WITHIN } from "./lobe-kernel.js";
import { allocTrace, horizonMax, traceLattice, type HorizonMax, type LatticeSpectra, type MainLobeMap } from "./horizon.js";

export class IdealLobes {
  private readonly W: number;
  private readonly H: number;
  private readonly M: number;
  private readonly N: number;
  private readonly main: Uint8Array;
  /** lobe cells sorted by grid value, descending */
  private readonly lobeCell: Int32Array;
  private readonly lobeGrid: Float64Array;
  private readonly refU: Float64Array;
  private readonly refV: Float64Array;
  private readonly refP: Float64Array;
  readonly peakPower: number;
  private readonly trace = allocTrace();
  private readonly hz: HorizonMax = { p: NaN, du: NaN, dv: NaN };
  /** lobes.ts QUAD_MARGIN for the horizon search; Infinity searches every maximum (the tests compare both) */
  quadMargin = QUAD_MARGIN;
  private lobe: MainLobeMap | null = null;

  constructor(periodic: Float64Array, nx: number, ny: number, private readonly du: number, private readonly dv: number, private readonly ev: AfEvaluator, private readonly spectra: LatticeSpectra) {
    this.M = Math.ceil(2 / du) + 2;
    this.N = Math.ceil(2 / dv) + 2;
    const W = (this.W = 2 * this.M + 1);
    const H = (this.H = 2 * this.N + 1);
    const p = new Float64Array(W * H);
    for (let j = 0; j < H; j++) {
      const row = ((((j - this.N) % ny) + ny) % ny) * nx;
      for (let i = 0; i < W; i++) p[j * W + i] = periodic[row + ((((i - this.M) % nx) + nx) % nx)]!;
    }
    // hill-climb from Δ = 0, then flood the main lobe
    const top = hillClimb(p, W, H, this.M, this.N);
    const ci = top % W, cj = (top - ci) / W;
    const main = (this.main = new Uint8Array(W * H));
    floodMainLobe(p, W, H, top, main);
    this.peakPower = refine(ev, (ci - this.M) * du, (cj - this.N) * dv, du, dv, null).p;
    const cells: number[] = [];
    for (let b = 1; b < H - 1; b++)
      for (let a = 1; a < W - 1; a++) {
        const q = b * W + a;
        if (main[q]) continue;
        const v = p[q]!;
        let isMax = true;
        for (let dj = -1; dj <= 1 && isMax; dj++)
          for (let di = -1; di <= 1; di++) {
            if (!di && !dj) continue;
            const r = (b + dj) * W + a + di;
            if (!main[r] && p[r]! > v) { isMax = false; break; }
          }
        if (isMax) cells.push(q);
      }
    cells.sort((x, y) => p[y]! - p[x]!);
    this.lobeCell = Int32Array.from(cells);
    this.lobeGrid = Float64Array.from(cells, (q) => p[q]!);
    this.refU = new Float64Array(cells.length).fill(NaN);
    this.refV = new Float64Array(cells.length);
    this.refP = new Float64Array(cells.length);
  }

  private refined(k: number): void {
    if (!Number.isNaN(this.refU[k]!)) return;
    const q = this.lobeCell[k]!;
    const a = q % this.W, b = (q - a) / this.W;
    const r = refine(this.ev, (a - this.M) * this.du, (b - this.N) * this.dv, this.du, this.dv, null);
    // + 0: no −0 from Math.round reaches an index (see inMain, horizon.ts)
    const ra = Math.round(r.du / this.du) + 0 + this.M, rb = Math.round(r.dv / this.dv) + 0 + this.N;
    const inMain = ra < 0 || rb < 0 || ra >= this.W || rb >= this.H || this.main[rb * this.W + ra] === 1;
    if (inMain || !(r.p >= this.lobeGrid[k]!)) {
      this.refU[k] = (a - this.M) * this.du;
      this.refV[k] = (b - this.N) * this.dv;
      this.refP[k] = this.lobeGrid[k]!;
    } else {
      this.refU[k] = r.du;
      this.refV[k] = r.dv;
      this.refP[k] = r.p;
    }
  }

  /** Largest ideal |AF|² over the visible disc of beam (u0, v0) outside the main lobe (NaN if none). */
  sidelobePower(u0: number, v0: number): number {
    const { du, dv, W, M, N, main } = this;
    let best = NaN;
    let bestGrid = 0;
    for (let k = 0; k < this.lobeCell.length; k++) {
      if (bestGrid > 0 && this.lobeGrid[k]! < LOBES_WITHIN * bestGrid) break;
      const q = this.lobeCell[k]!;
      const a = q % W, b = (q - a) / W;
      // a lobe whose grid cell is far outside the disc cannot be visible
      const uc = u0 + (a - M) * du, vc = v0 + (b - N) * dv;
      if (Math.sqrt(uc * uc + vc * vc) > 1 + 3 * Math.max(du, dv)) continue;
      this.refined(k);
      const u = u0 + this.refU[k]!, v = v0 + this.refV[k]!;
      if (u * u + v * v > 1) continue;
      if (!(this.refP[k]! <= best)) best = this.refP[k]!;
      if (bestGrid === 0) bestGrid = this.lobeGrid[k]!;
    }
    // the horizon, traced and searched along the circle (horizon.ts)
    traceLattice(this.spectra, u0, v0, this.trace);
    // the main lobe: the unwrapped grid's flood; off that grid counts as main lobe
    // (the ideal pattern peaks at Δ = 0: |Σ a_n e^{jk r_n·Δ}| ≤ Σ a_n)
    this.lobe ??= { mask: main, m0: -M, n0: -N, w: W, h: this.H, du, dv, outside: true, visible: null, u0: 0, v0: 0, peakDu: 0, peakDv: 0, lockU: false, lockV: false };
    const h = horizonMax(this.trace, this.ev, u0, v0, this.lobe, Number.isNaN(best) ? 0 : best, this.hz, best / this.quadMargin);
    if (h.p > best || (Number.isNaN(best) && h.p > 0)) best = h.p;
    return best;
  }
}
