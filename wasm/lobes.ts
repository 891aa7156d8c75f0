// AssemblyScript source of the lobe search's grid-wide passes (src/core/pattern/lobes.ts):
// the main lobe's monotone flood and the scan for sidelobe candidates, compiled by
// scripts/build-wasm.mjs. Comparisons only: the results are those of the TypeScript they
// replace. Arrays live in the instance's memory at byte offsets the JS side assigns.

// @ts-nocheck: AssemblyScript types (f64, i32, usize, load, store), not TypeScript's

@inline function pf(p: usize, q: i32): f64 { return load<f64>(p + (<usize>q << 3)); }
@inline function b8(a: usize, q: i32): bool { return load<u8>(a + <usize>q) != 0; }

/**
 * Main lobe: every cell reachable from `start` by 8-neighbour steps that never rise (a
 * cell joins when its power is not above the cell it was reached from), into mask (u8,
 * w × h, row-major); stack: w·h int32 of room.
 */
export function flood(p: usize, w: i32, h: i32, start: i32, mask: usize, stack: usize): void {
  memory.fill(mask, 0, <usize>(w * h));
  let sp = 0;
  store<i32>(stack + (<usize>(sp++) << 2), start);
  store<u8>(mask + <usize>start, 1);
  while (sp > 0) {
    const c = load<i32>(stack + (<usize>(--sp) << 2));
    const ci = c % w;
    const cj = (c - ci) / w;
    const pc = pf(p, c);
    for (let dj = -1; dj <= 1; dj++)
      for (let di = -1; di <= 1; di++) {
        const a = ci + di, b = cj + dj;
        if (a < 0 || b < 0 || a >= w || b >= h) continue;
        const q = b * w + a;
        if (b8(mask, q) || pf(p, q) > pc) continue;
        store<u8>(mask + <usize>q, 1);
        store<i32>(stack + (<usize>(sp++) << 2), q);
      }
  }
}

const CANDIDATES = 48;

/** A candidate at the same coordinate along the line as cell q is already held (line 1: columns, 2: rows). */
function sameLineCoordinate(cand: usize, nc: i32, q: i32, wm: i32, line: i32): bool {
  for (let k = 0; k < nc; k++) {
    const c = load<i32>(cand + (<usize>k << 2));
    if (line == 1 ? c % wm == q % wm : c / wm == q / wm) return true;
  }
  return false;
}

/**
 * The CANDIDATES largest local maxima (8-neighbourhood) of the visible cells outside the
 * main lobe that can be contenders (at least the `always` largest, and those within
 * `within` of the largest) into cand (int32) and candP (float64), largest first; returns how many (LobeFinder.analyse
 * in lobes.ts explains the rules and which of them it refines). line: 0 planar, 1 a row array (one candidate per
 * window column), 2 a column array (per window row).
 */
export function scan(p: usize, visible: usize, mask: usize, wm: i32, wn: i32, cand: usize, candP: usize, line: i32, always: i32, within: f64): i32 {
  let nc = 0;
  // a cell not above floorP cannot enter (CANDIDATES are held, none smaller); a cell under
  // barP cannot be a contender (`always` are held, and it is under the always-th largest
  // and not within `within` of the largest: both only rise)
  let floorP = -Infinity, barP = -Infinity;
  for (let b = 0; b < wn; b++)
    for (let a = 0; a < wm; a++) {
      const q = b * wm + a;
      if (!b8(visible, q) || b8(mask, q)) continue;
      const pq = pf(p, q);
      if ((nc == CANDIDATES && !(pq > floorP)) || pq < barP) continue;
      if (a > 0 && pf(p, q - 1) > pq && b8(visible, q - 1) && !b8(mask, q - 1)) continue;
      if (a + 1 < wm && pf(p, q + 1) > pq && b8(visible, q + 1) && !b8(mask, q + 1)) continue;
      let isMax = true;
      for (let dj = -1; dj <= 1 && isMax; dj += 2) {
        const y = b + dj;
        if (y < 0 || y >= wn) continue;
        for (let di = -1; di <= 1; di++) {
          const x = a + di;
          if (x < 0 || x >= wm) continue;
          const r = y * wm + x;
          if (b8(visible, r) && !b8(mask, r) && pf(p, r) > pq) { isMax = false; break; }
        }
      }
      if (!isMax) continue;
      if (line != 0 && sameLineCoordinate(cand, nc, q, wm, line)) continue;
      // insert in decreasing order (the smallest drops out when CANDIDATES are held)
      let k = nc < CANDIDATES ? nc : CANDIDATES - 1;
      if (nc < CANDIDATES) nc++;
      for (; k > 0 && pf(candP, k - 1) < pq; k--) {
        store<i32>(cand + (<usize>k << 2), load<i32>(cand + (<usize>(k - 1) << 2)));
        store<f64>(candP + (<usize>k << 3), pf(candP, k - 1));
      }
      store<i32>(cand + (<usize>k << 2), q);
      store<f64>(candP + (<usize>k << 3), pq);
      if (nc == CANDIDATES) floorP = pf(candP, CANDIDATES - 1);
      if (nc >= always) barP = min(pf(candP, always - 1), within * pf(candP, 0));
    }
  return nc;
}
