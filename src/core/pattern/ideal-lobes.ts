/**
 * The ideal pattern of a lattice, once per frequency. Its de-steered weights do not
 * depend on the beam, so |AF_ideal(d̂ + Δ)|² is one fixed function I(Δ): its main lobe
 * (monotone flood from Δ = 0) and its lobe peaks are found once on an unwrapped Δ-grid
 * covering every beam's visible disc (|Δu|, |Δv| ≤ 2), and refined on demand (cached).
 * Per beam only the visible disc changes:
 *   PSL_ideal = max( lobes whose exact peak lies in the disc,
 *                    the horizon: cells on the disc's edge, refined along the circle ).
 * Lobes are visited in decreasing grid value and the search stops 1 dB (factor 0.794)
 * below the best visible one found, as in LobeFinder (4× oversampling scallops < 0.45 dB).
 */
import type { AfEvaluator } from "./evaluator.js";
import { floodMainLobe, hillClimb, refine } from "./lobes.js";

const REFINE_WITHIN = 0.794;

export class IdealLobes {
  private readonly W: number;
  private readonly H: number;
  private readonly M: number;
  private readonly N: number;
  private readonly p: Float64Array;
  private readonly main: Uint8Array;
  /** lobe cells sorted by grid value, descending */
  private readonly lobeCell: Int32Array;
  private readonly lobeGrid: Float64Array;
  private readonly refU: Float64Array;
  private readonly refV: Float64Array;
  private readonly refP: Float64Array;
  readonly peakPower: number;

  constructor(periodic: Float64Array, nx: number, ny: number, private readonly du: number, private readonly dv: number, private readonly ev: AfEvaluator) {
    this.M = Math.ceil(2 / du) + 2;
    this.N = Math.ceil(2 / dv) + 2;
    const W = (this.W = 2 * this.M + 1);
    const H = (this.H = 2 * this.N + 1);
    const p = (this.p = new Float64Array(W * H));
    for (let j = 0; j < H; j++) {
      const row = ((((j - this.N) % ny) + ny) % ny) * nx;
      for (let i = 0; i < W; i++) p[j * W + i] = periodic[row + ((((i - this.M) % nx) + nx) % nx)]!;
    }
    // hill-climb from Δ = 0, then flood the main lobe
    const top = hillClimb(p, W, H, this.M, this.N);
    const ci = top % W, cj = (top - ci) / W;
    const main = (this.main = new Uint8Array(W * H));
    floodMainLobe(p, W, H, top, main, new Int32Array(W * H));
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
    const ra = Math.round(r.du / this.du) + this.M, rb = Math.round(r.dv / this.dv) + this.N;
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
    const { du, dv, W, M, N, p, main } = this;
    const vis = (a: number, b: number) => {
      const u = u0 + (a - M) * du, v = v0 + (b - N) * dv;
      return u * u + v * v <= 1;
    };
    let best = NaN;
    let bestGrid = 0;
    for (let k = 0; k < this.lobeCell.length; k++) {
      if (bestGrid > 0 && this.lobeGrid[k]! < REFINE_WITHIN * bestGrid) break;
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
    // the horizon: visible cells with a neighbour past it
    const jLo = Math.max(1, Math.ceil((-1 - v0) / dv) + N - 1);
    const jHi = Math.min(this.H - 2, Math.floor((1 - v0) / dv) + N + 1);
    const edge: number[] = [];
    // right end of the visible cells of row b (or -Infinity when the row is past the horizon)
    const rowHi = (b: number) => {
      const v = v0 + (b - N) * dv;
      return v * v > 1 ? -Infinity : Math.floor((Math.sqrt(1 - v * v) - u0) / du) + M;
    };
    for (let b = jLo; b <= jHi; b++) {
      const v = v0 + (b - N) * dv;
      if (v * v > 1) continue;
      const half = Math.sqrt(1 - v * v);
      const aLo = Math.max(1, Math.ceil((-half - u0) / du) + M);
      const aHi = Math.min(W - 2, Math.floor((half - u0) / du) + M);
      // cells right of both neighbour rows' ends have an invisible neighbour
      const suffix = Math.min(rowHi(b - 1), rowHi(b + 1), aHi);
      for (let a = aLo; a <= aHi; a++) {
        if (!vis(a, b)) continue;
        let onEdge = false;
        for (let dj = -1; dj <= 1 && !onEdge; dj++) for (let di = -1; di <= 1; di++) if (!vis(a + di, b + dj)) { onEdge = true; break; }
        if (!onEdge) {
          // the prefix of edge cells is over: skip to where the suffix can start
          if (a < suffix - 1) a = suffix - 1;
          continue;
        }
        const q = b * W + a;
        if (!main[q]) edge.push(q);
      }
    }
    let edgeBest = 0;
    for (const q of edge) edgeBest = Math.max(edgeBest, p[q]!);
    const bar = REFINE_WITHIN * Math.max(edgeBest, Number.isNaN(best) ? 0 : best);
    for (const q of edge) {
      if (p[q]! < bar) continue;
      // only local maxima along the edge set are worth refining
      const a = q % W, b = (q - a) / W;
      let isMax = true;
      for (let dj = -1; dj <= 1 && isMax; dj++)
        for (let di = -1; di <= 1; di++) {
          if (!di && !dj) continue;
          const r = (b + dj) * W + a + di;
          if (vis(a + di, b + dj) && !main[r] && p[r]! > p[q]!) { isMax = false; break; }
        }
      if (!isMax) continue;
      const r = refine(this.ev, (a - M) * du, (b - N) * dv, du, dv, { u0, v0 });
      const ra = Math.round(r.du / du) + M, rb = Math.round(r.dv / dv) + N;
      const inMain = ra >= 0 && rb >= 0 && ra < W && rb < this.H && main[rb * W + ra] === 1;
      const val = inMain || !(r.p >= p[q]!) ? p[q]! : r.p;
      if (!(val <= best)) best = val;
    }
    return best;
  }
}
