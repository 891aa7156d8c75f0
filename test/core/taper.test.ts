import { readFileSync, readdirSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { chebyshevWeights } from "../../src/core/taper/chebyshev.js";
import { taylorCoefficients, taylorAt } from "../../src/core/taper/taylor.js";
import { load, baseScenario } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";

const FIX = join(import.meta.dirname, "..", "fixtures", "scipy");
interface Fixture { meta: { call: string; scipyVersion: string }; params: Record<string, number>; window: number[] }
const fixtures = readdirSync(FIX).filter((f) => f.endsWith(".json")).map((f) => ({ f, doc: JSON.parse(readFileSync(join(FIX, f), "utf8")) as Fixture }));

function maxNorm(a: ArrayLike<number>): number[] {
  const m = Math.max(...Array.from(a));
  return Array.from(a, (x) => x / m);
}

describe("Taylor n̄ taper", () => {
  // reference library: scipy.signal.windows.taylor (Debian python3-scipy; version in each fixture's meta).
  // scipy normalises to the continuous centre value; the contract normalises to the sampled peak,
  // so both are compared after scaling to a peak of 1.
  for (const { f, doc } of fixtures.filter((x) => x.f.startsWith("taylor"))) {
    it(`matches ${doc.meta.call} (scipy ${doc.meta.scipyVersion}) — ${f}`, () => {
      const { M, nbar, sll } = doc.params as { M: number; nbar: number; sll: number };
      const F = taylorCoefficients(-sll, nbar);
      const ours = Array.from({ length: M }, (_, m) => taylorAt((m - (M - 1) / 2) / M, F));
      const a = maxNorm(ours);
      const b = maxNorm(doc.window);
      for (let i = 0; i < M; i++) expect(a[i]).toBeCloseTo(b[i]!, 12);
    });
  }

  it("is separable on a lattice: a(r,c) = t(p_x)·t(p_y) with p = x/(columns·dx), peak 1", () => {
    // interface contract: Taylor sampled at p = (m − (M−1)/2)/M on a rectangular lattice
    const L = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 6, rows: 4, dx: "5 mm", dy: "6 mm" } }, taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 3 } }));
    const F = taylorCoefficients(-30, 3);
    const tx = maxNorm(Array.from({ length: 6 }, (_, m) => taylorAt((m - 2.5) / 6, F)));
    const ty = maxNorm(Array.from({ length: 4 }, (_, m) => taylorAt((m - 1.5) / 4, F)));
    const a = L.plan.amplitude;
    for (let r = 0; r < 4; r++) for (let c = 0; c < 6; c++) expect(a[r * 6 + c]).toBeCloseTo(tx[c]! * ty[r]!, 12);
    expect(Math.max(...a)).toBe(1);
  });

  it("element lists take the aperture as span·M/(M−1): a regular line gives the lattice values", () => {
    const csv = "element,x_m,y_m\n" + Array.from({ length: 8 }, (_, i) => `${i},${(i * 0.015).toFixed(3)},0`).join("\n") + "\n";
    const L1 = load(baseScenario({ array: { elements: "el.csv" }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 } }), { "el.csv": csv });
    const L2 = load(baseScenario({ array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "15 mm", dy: "15 mm" } }, taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 } }));
    for (let i = 0; i < 8; i++) expect(L1.plan.amplitude[i]).toBeCloseTo(L2.plan.amplitude[i]!, 12);
  });
});

describe("Dolph–Chebyshev taper", () => {
  // reference library: scipy.signal.windows.chebwin (Debian python3-scipy)
  for (const { f, doc } of fixtures.filter((x) => x.f.startsWith("chebwin"))) {
    it(`matches ${doc.meta.call} (scipy ${doc.meta.scipyVersion}) — ${f}`, () => {
      const { M, at } = doc.params as { M: number; at: number };
      const ours = chebyshevWeights(M, -at);
      const b = maxNorm(doc.window);
      for (let i = 0; i < M; i++) expect(ours[i]).toBeCloseTo(b[i]!, 10);
    });
  }

  for (const [N, sll] of [[16, -30], [17, -40], [24, -25]] as const) {
    it(`N = ${N}, ${sll} dB: every sidelobe sits at the design level (equal ripple)`, () => {
      // source: Dolph, Proc. IRE 34 (1946) — all sidelobes equal at the design level.
      const w = chebyshevWeights(N, sll);
      const K = 20000;
      const af = new Float64Array(K + 1);
      for (let k = 0; k <= K; k++) {
        const psi = (Math.PI * k) / K; // 0 … π covers the visible range for d = λ/2 at any scan
        let re = 0;
        let im = 0;
        for (let n = 0; n < N; n++) {
          re += w[n]! * Math.cos(psi * (n - (N - 1) / 2));
          im += w[n]! * Math.sin(psi * (n - (N - 1) / 2));
        }
        af[k] = Math.hypot(re, im);
      }
      const peak = af[0]!;
      const lobes: number[] = [];
      let pastNull = false;
      for (let k = 1; k < K; k++) {
        if (af[k]! < af[k - 1]! && af[k]! < af[k + 1]!) pastNull = true;
        if (pastNull && af[k]! >= af[k - 1]! && af[k]! >= af[k + 1]!) lobes.push(20 * Math.log10(af[k]! / peak));
      }
      // a lobe at the end of the range (ψ = π) counts only when the pattern rises into it (odd N)
      if (af[K]! >= af[K - 1]!) lobes.push(20 * Math.log10(af[K]! / peak));
      expect(lobes.length).toBeGreaterThan(N / 2 - 2);
      for (const l of lobes) expect(l).toBeCloseTo(sll, 1);
    });
  }
});

describe("scipy fixtures are current", () => {
  itWith([TOOLS.scipy], "regenerating them with Debian's python3-scipy gives the committed windows", async () => {
    const { execFileSync } = await import("node:child_process");
    const { tempDir } = await import("../helpers.js");
    const out = tempDir();
    try {
      execFileSync("/usr/bin/python3", [join(FIX, "make_windows.py"), "--out", out], { stdio: "pipe" });
    } catch (e) {
      throw new Error(`the scipy fixture runner failed: ${String((e as { stderr?: Buffer }).stderr ?? e)}`);
    }
    for (const { f, doc } of fixtures) {
      const fresh = JSON.parse(readFileSync(join(out, f), "utf8")) as Fixture;
      expect(fresh.meta.call).toBe(doc.meta.call);
      fresh.window.forEach((v, i) => expect(v).toBeCloseTo(doc.window[i]!, 12));
    }
  });
});
