/**
 * Published estimates for B-bit phase quantisation and step attenuators, each with
 * its source (see README "Theory beside measurement").
 */
import type { Plan } from "./plan.js";

export interface TheoryValue {
  value: number;
  unit: string;
  formula: string;
  source: string;
}

export interface Theory {
  gainLossDb: TheoryValue;
  rmsPhaseErrorDeg: TheoryValue;
  rmsAmpErrorDb: TheoryValue;
  quantizationLobeDb: TheoryValue;
  quantizationLobeSawtoothDb: TheoryValue;
  randomSidelobeFloorDb: TheoryValue;
  taperEfficiency: number;
}

/** Gain loss of B-bit phase quantisation, dB: −10·log10([sin(π/2^B)/(π/2^B)]²). */
export function phaseQuantGainLossDb(bits: number): number {
  const x = Math.PI / 2 ** bits;
  return -10 * Math.log10((Math.sin(x) / x) ** 2);
}

/** Taper efficiency η = |Σa|² / (N·Σa²) over enabled elements. */
export function taperEfficiency(plan: Plan): number {
  let s = 0, s2 = 0, n = 0;
  plan.amplitude.forEach((a, i) => {
    if (!plan.elements.enabled[i]) return;
    s += a;
    s2 += a * a;
    n++;
  });
  return (s * s) / (n * s2);
}

export function theoryFor(plan: Plan, bits = plan.phaseBits, stepDb = plan.attenStepDb): Theory {
  const lsbDeg = 360 / 2 ** bits;
  const rmsPhaseDeg = lsbDeg / Math.sqrt(12);
  const rmsAmpDb = stepDb / Math.sqrt(12);
  const eta = taperEfficiency(plan);
  let n = 0;
  for (const e of plan.elements.enabled) n += e;
  const sigPhase = (rmsPhaseDeg * Math.PI) / 180;
  const sigAmp = (rmsAmpDb * Math.LN10) / 20; // relative amplitude error, small-error approximation
  const sigma2 = sigPhase ** 2 + (plan.attenBits > 0 ? sigAmp ** 2 : 0);
  return {
    gainLossDb: { value: phaseQuantGainLossDb(bits), unit: "dB", formula: "−10·log10([sin(π/2^B)/(π/2^B)]²)", source: "Mailloux, Phased Array Antenna Handbook, ch. 7 (from memory)" },
    rmsPhaseErrorDeg: { value: rmsPhaseDeg, unit: "deg", formula: "LSB/√12", source: "common practice (uniform rounding error)" },
    rmsAmpErrorDb: { value: rmsAmpDb, unit: "dB", formula: "step/√12", source: "common practice (uniform rounding error)" },
    quantizationLobeDb: { value: -6.02 * bits, unit: "dB", formula: "2^(−2B) ≈ −6.02·B dB", source: "Mailloux, ch. 7 (from memory)" },
    quantizationLobeSawtoothDb: { value: 20 * Math.log10(1 / (2 ** bits - 1)), unit: "dB", formula: "1/(2^B − 1)²", source: "Miller, RADC report, 1964 (from memory): exact periodic sawtooth" },
    randomSidelobeFloorDb: { value: 10 * Math.log10(sigma2 / (eta * n)), unit: "dB", formula: "σ²/(η·N)", source: "Mailloux, ch. 7 (from memory); σ² = phase + amplitude error variance" },
    taperEfficiency: eta,
  };
}
