// AssemblyScript source of the exact array factor's element loops for planar arrays
// (AfEvaluator.field and afDerivs in src/core/pattern/evaluator.ts), compiled by
// scripts/build-wasm.mjs. The sums run in the same order, operation for operation, as the
// TypeScript they replaced. The phasors (cos, sin of each distinct coordinate) are taken
// here too, with AssemblyScript's NativeMath.sincos (musl's sincos, under 1 ulp); V8's
// Math.cos and Math.sin may differ from it in the last bit. They were taken on the JS side
// before: a fresh process ran that loop in V8's interpreter for its first beams (16×16 ×
// 441 beams: analysis 179 → 164 ms, median of 11), and importing Math.cos boxed a number
// a call.

// @ts-nocheck: AssemblyScript types (f64, i32, usize, load, store), not TypeScript's

let n = 0, ng = 0, mode = 0;
let k = 0.0;
let wr: usize = 0, wi: usize = 0, cx: usize = 0, sx: usize = 0, cy: usize = 0, sy: usize = 0;
let kx: usize = 0, kx2: usize = 0, yv: usize = 0, out: usize = 0;
let order: usize = 0, groupStart: usize = 0, xi: usize = 0, xv: usize = 0;
let nx = 0;

/** Lays out the arrays from byte `base` (8-aligned): mode 1 elements in row-group order, 2 through `order`. Returns the end. */
export function setup(n_: i32, nxd: i32, ng_: i32, mode_: i32, k_: f64, base: usize): usize {
  n = n_; ng = ng_; mode = mode_; k = k_; nx = nxd;
  let p = base;
  out = p; p += 8 << 3;
  wr = p; p += <usize>n << 3;
  wi = p; p += <usize>n << 3;
  cx = p; p += <usize>nxd << 3;
  sx = p; p += <usize>nxd << 3;
  cy = p; p += <usize>ng << 3;
  sy = p; p += <usize>ng << 3;
  kx = p; p += <usize>n << 3;
  kx2 = p; p += <usize>n << 3;
  yv = p; p += <usize>ng << 3;
  order = p; p += <usize>n << 2;
  groupStart = p; p += <usize>(ng + 1) << 2;
  xi = p; p += <usize>n << 2;
  p = (p + 7) & ~7;
  xv = p; p += <usize>nxd << 3;
  return p;
}
/** Byte offsets for the JS side's views, by index (the order of setup()). */
export function offset(i: i32): usize {
  switch (i) {
    case 0: return out;
    case 1: return wr;
    case 2: return wi;
    case 3: return cx;
    case 4: return sx;
    case 5: return cy;
    case 6: return sy;
    case 7: return kx;
    case 8: return kx2;
    case 9: return yv;
    case 10: return order;
    case 11: return groupStart;
    case 12: return xi;
    case 13: return xv;
  }
  return 0;
}

@inline function f(base: usize, i: i32): f64 { return load<f64>(base + (<usize>i << 3)); }
@inline function j(base: usize, i: i32): i32 { return load<i32>(base + (<usize>i << 2)); }

/** cos, sin of k·x·Δu per distinct x and of k·y·Δv per distinct y (NativeMath.sincos: musl's). */
function phasors(du: f64, dv: f64): void {
  for (let q = 0; q < nx; q++) {
    NativeMath.sincos(k * f(xv, q) * du);
    store<f64>(cx + (<usize>q << 3), NativeMath.sincos_cos);
    store<f64>(sx + (<usize>q << 3), NativeMath.sincos_sin);
  }
  for (let q = 0; q < ng; q++) {
    NativeMath.sincos(k * f(yv, q) * dv);
    store<f64>(cy + (<usize>q << 3), NativeMath.sincos_cos);
    store<f64>(sy + (<usize>q << 3), NativeMath.sincos_sin);
  }
}

/** F = Σ w·e^{j(kx·Δu + ky·Δv)} of a planar array into out[0], out[1]. */
export function field(du: f64, dv: f64): void {
  phasors(du, dv);
  let re = 0.0, im = 0.0;
  for (let g = 0; g < ng; g++) {
    let sr = 0.0, si = 0.0;
    const q0 = j(groupStart, g), q1 = j(groupStart, g + 1);
    if (mode == 1) {
      for (let i = q0; i < q1; i++) {
        const a = j(xi, i);
        const c = f(cx, a), s = f(sx, a), w_r = f(wr, i), w_i = f(wi, i);
        sr += w_r * c - w_i * s;
        si += w_r * s + w_i * c;
      }
    } else {
      for (let q = q0; q < q1; q++) {
        const i = j(order, q);
        const a = j(xi, i);
        sr += f(wr, i) * f(cx, a) - f(wi, i) * f(sx, a);
        si += f(wr, i) * f(sx, a) + f(wi, i) * f(cx, a);
      }
    }
    re += f(cy, g) * sr - f(sy, g) * si;
    im += f(cy, g) * si + f(sy, g) * sr;
  }
  store<f64>(out, re);
  store<f64>(out, im, 8);
}

/** |F|² and its first and second derivatives in (Δu, Δv), planar arrays: out[0..5] = p, pu, pv, puu, pvv, puv. */
export function derivs(du: f64, dv: f64): void {
  phasors(du, dv);
  let fr = 0.0, fi = 0.0, fur = 0.0, fui = 0.0, fvr = 0.0, fvi = 0.0;
  let fuur = 0.0, fuui = 0.0, fvvr = 0.0, fvvi = 0.0, fuvr = 0.0, fuvi = 0.0;
  for (let g = 0; g < ng; g++) {
    let s0r = 0.0, s0i = 0.0, s1r = 0.0, s1i = 0.0, s2r = 0.0, s2i = 0.0;
    const q0 = j(groupStart, g), q1 = j(groupStart, g + 1);
    if (mode == 1) {
      for (let i = q0; i < q1; i++) {
        const a = j(xi, i);
        const c = f(cx, a), s = f(sx, a), w_r = f(wr, i), w_i = f(wi, i);
        const tr = w_r * c - w_i * s;
        const ti = w_r * s + w_i * c;
        const k1 = f(kx, i), k2 = f(kx2, i);
        s0r += tr;
        s0i += ti;
        s1r += k1 * tr;
        s1i += k1 * ti;
        s2r += k2 * tr;
        s2i += k2 * ti;
      }
    } else {
      for (let q = q0; q < q1; q++) {
        const i = j(order, q);
        const a = j(xi, i);
        const tr = f(wr, i) * f(cx, a) - f(wi, i) * f(sx, a);
        const ti = f(wr, i) * f(sx, a) + f(wi, i) * f(cx, a);
        s0r += tr;
        s0i += ti;
        s1r += f(kx, i) * tr;
        s1i += f(kx, i) * ti;
        s2r += f(kx2, i) * tr;
        s2i += f(kx2, i) * ti;
      }
    }
    const er = f(cy, g), ei = f(sy, g);
    const Y = k * f(yv, g);
    const a0r = er * s0r - ei * s0i, a0i = er * s0i + ei * s0r;
    const a1r = er * s1r - ei * s1i, a1i = er * s1i + ei * s1r;
    const a2r = er * s2r - ei * s2i, a2i = er * s2i + ei * s2r;
    fr += a0r;
    fi += a0i;
    fur -= a1i;
    fui += a1r;
    fvr -= Y * a0i;
    fvi += Y * a0r;
    fuur -= a2r;
    fuui -= a2i;
    fvvr -= Y * Y * a0r;
    fvvi -= Y * Y * a0i;
    fuvr -= Y * a1r;
    fuvi -= Y * a1i;
  }
  store<f64>(out, fr * fr + fi * fi);
  store<f64>(out, 2 * (fr * fur + fi * fui), 8);
  store<f64>(out, 2 * (fr * fvr + fi * fvi), 16);
  store<f64>(out, 2 * (fur * fur + fui * fui + fr * fuur + fi * fuui), 24);
  store<f64>(out, 2 * (fvr * fvr + fvi * fvi + fr * fvvr + fi * fvvi), 32);
  store<f64>(out, 2 * (fur * fvr + fui * fvi + fr * fuvr + fi * fuvi), 40);
}
