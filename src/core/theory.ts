/**
 * Estimates beside the measurements (README "Theory beside measurement"), each with its
 * formula and source, chosen to fit the quantizer and the part that produced the
 * numbers: nearest rounding (uniform error, published), randomized (stochastic)
 * rounding (derived below), the attenuator's rounding and clipping (derived), and
 * "n/a" with the reason where no estimate applies (measured state tables, a quantizer
 * without one).
 */
import type { Plan } from "./plan.js";
import { prepareFrequency } from "./quantize/prepare.js";

export interface TheoryValue {
  /** null: no estimate fits this quantizer and part; `note` says why */
  value: number | null;
  unit: string;
  formula: string;
  source: string;
  /** why the value is n/a, or what it assumes */
  note?: string;
}

export interface Theory {
  /** the quantizer the estimates are for */
  quantizer: string;
  /** gain loss from phase quantisation alone */
  gainLossDb: TheoryValue;
  /** gain change from the attenuator (rounding and clipping) at the commanded direction; negative = more gain than the tapered ideal */
  attenGainChangeDb: TheoryValue;
  /** phase term + attenuator term: what gain_loss_db should be near */
  expectedGainLossDb: TheoryValue;
  rmsPhaseErrorDeg: TheoryValue;
  rmsAmpErrorDb: TheoryValue;
  quantizationLobeDb: TheoryValue;
  quantizationLobeSawtoothDb: TheoryValue;
  randomSidelobeFloorDb: TheoryValue;
  taperEfficiency: number;
  /** enabled elements clipped by the attenuator, summed over the frequencies */
  clippedElements: number;
  /** the part of the rms amplitude error that clipping alone causes (dB; 0 without clipping) */
  clippingRmsAmpErrorDb: number;
}

const LOG10_2 = Math.log10(2);

/** Gain loss of B-bit phase quantisation with nearest rounding, dB: −10·log10([sin(π/2^B)/(π/2^B)]²). */
export function phaseQuantGainLossDb(bits: number): number {
  const x = Math.PI / 2 ** bits;
  return -10 * Math.log10((Math.sin(x) / x) ** 2);
}

/**
 * Gain loss of B-bit phase quantisation with stochastic rounding, dB (derived).
 * A phase at fraction f ∈ [0, 1) of an LSB Δ = 2π/2^B above a code is rounded up (error
 * (1 − f)·Δ) with probability f and down (error −f·Δ) with probability 1 − f. With f
 * uniform (a spread of calibration phases), the mean phasor is
 * E[e^{jε}] = ∫₀¹ [f·e^{j(1−f)Δ} + (1 − f)·e^{−jfΔ}] df = 2∫₀¹ (1 − f)·cos(fΔ) df
 * = 2(1 − cos Δ)/Δ² = [sin(Δ/2)/(Δ/2)]², so the coherent gain |E[e^{jε}]|² is
 * [sin(π/2^B)/(π/2^B)]⁴: twice nearest rounding's loss in dB.
 */
export function stochasticGainLossDb(bits: number): number {
  const x = Math.PI / 2 ** bits;
  return -10 * Math.log10((Math.sin(x) / x) ** 4);
}

/**
 * rms phase error of stochastic rounding in LSB (derived): E[e²|f] = f(1 − f)² + (1 − f)f²
 * = f(1 − f), and ∫₀¹ f(1 − f) df = 1/6, so LSB/√6 (nearest rounding: LSB/√12).
 */
export const STOCHASTIC_RMS_LSB = 1 / Math.sqrt(6);

/** Periodic quantisation lobe 2^(−2B) in dB, exactly: 10·log10(2^(−2B)) = −20·B·log10(2) = −6.0206·B dB. */
export function quantizationLobeDb(bits: number): number {
  return -20 * bits * LOG10_2;
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

/** What the attenuator does to the amplitudes, from the codes (ideal attenuator; beam-independent). */
interface AttenFacts {
  /** mean over frequencies of −20·log10(Σ realized / Σ tapered amplitude) */
  gainChangeDb: number;
  /** enabled elements in all, clipped ones, and the sum of squared clipping excess (dB²) */
  n: number;
  clipped: number;
  clipSq: number;
  /** unclipped elements, and how many need a rounding (not a whole number of steps) */
  rounded: number;
  offGrid: number;
  /** Σ over the unclipped enabled elements (all frequencies) of the actual rounding error² (A_n − q_n·step)², dB² */
  roundSq: number;
  /**
   * Σ a_n²·ε_n² over the unclipped elements over Σ a_n² over all enabled ones (taper
   * amplitudes, all frequencies), ε_n = 10^((A_n − q_n·step)/20) − 1 the actual relative
   * amplitude error of the rounding: the a²-weighted mean square of the attenuator's
   * rounding error (whole steps add nothing; clipped elements are left out, see the floor)
   */
  roundingErrorPower: number;
}

function attenFacts(plan: Plan): AttenFacts {
  const el = plan.elements;
  const maxCode = 2 ** plan.attenBits - 1;
  const range = maxCode * plan.attenStepDb;
  let gain = 0, n = 0, clipped = 0, clipSq = 0, rounded = 0, offGrid = 0, a2 = 0, a2Err = 0, roundSq = 0;
  for (let fi = 0; fi < plan.frequenciesHz.length; fi++) {
    const prep = prepareFrequency(plan, fi);
    let sr = 0, si = 0;
    for (let i = 0; i < el.count; i++) {
      if (!el.enabled[i]) continue;
      n++;
      const a = prep.attenDb[i]!;
      const q = prep.attenCode[i]!;
      // realized over ideal amplitude, dB: A_n − q·step (positive: louder than the taper asks)
      const e = a - q * plan.attenStepDb;
      const ideal = Math.pow(10, prep.gRefDb / 20) * plan.amplitude[i]!;
      si += ideal;
      sr += ideal * Math.pow(10, e / 20);
      const amp = plan.amplitude[i]!;
      a2 += amp * amp;
      if (plan.attenBits === 0 || prep.clippedMask[i]) {
        clipped += prep.clippedMask[i]!; // the count the manifest and check report
        clipSq += (plan.attenBits === 0 ? a : a - range) ** 2;
      } else {
        rounded++;
        roundSq += e * e;
        a2Err += amp * amp * (Math.pow(10, e / 20) - 1) ** 2;
        const t = a / plan.attenStepDb;
        if (Math.abs(t - Math.round(t)) > 1e-9) offGrid++;
      }
    }
    gain += si > 0 ? -20 * Math.log10(sr / si) : 0;
  }
  return { gainChangeDb: gain / Math.max(1, plan.frequenciesHz.length), n, clipped, clipSq, rounded, offGrid, roundSq, roundingErrorPower: a2 > 0 ? a2Err / a2 : 0 };
}

const na = (unit: string, note: string): TheoryValue => ({ value: null, unit, formula: "n/a", source: "n/a", note });

/** The estimates that fit `plan`'s quantizer and part (a sweep passes each variant's plan). */
export function theoryFor(plan: Plan): Theory {
  const bits = plan.phaseBits;
  const method = plan.quantizer.method as string;
  const lsbDeg = 360 / 2 ** bits;
  const eta = taperEfficiency(plan);
  let nEnabled = 0;
  for (const e of plan.elements.enabled) nEnabled += e;
  const measured = !!(plan.phaseStates || plan.attenStates);
  const measuredWhy = "measured state tables: the quantizer searches the measured states for the nearest weight, so no uniform-step estimate applies; compare the measured values with each other";

  // ---- phase
  let gainLossDb: TheoryValue, rmsPhaseErrorDeg: TheoryValue, quantLobe: TheoryValue, sawtooth: TheoryValue;
  if (plan.phaseStates || plan.attenStates) {
    gainLossDb = na("dB", measuredWhy);
    rmsPhaseErrorDeg = na("deg", measuredWhy);
    quantLobe = na("dB", measuredWhy);
    sawtooth = na("dB", measuredWhy);
  } else if (method === "nearest") {
    gainLossDb = { value: phaseQuantGainLossDb(bits), unit: "dB", formula: "−10·log10([sin(π/2^B)/(π/2^B)]²)", source: "Mailloux, Phased Array Antenna Handbook, ch. 7 (from memory)", note: "nearest rounding; errors uniform over ±LSB/2, as with spread calibration phases" };
    rmsPhaseErrorDeg = { value: lsbDeg / Math.sqrt(12), unit: "deg", formula: "LSB/√12", source: "common practice (uniform rounding error)" };
    quantLobe = { value: quantizationLobeDb(bits), unit: "dB", formula: "10·log10(2^(−2B)) = −6.0206·B dB", source: "Mailloux, ch. 7 (from memory)", note: "only with periodic rounding errors: no calibration spread" };
    sawtooth = { value: 20 * Math.log10(1 / (2 ** bits - 1)), unit: "dB", formula: "1/(2^B − 1)²", source: "Miller, RADC report, 1964 (from memory): exact periodic sawtooth" };
  } else if (method === "randomized") {
    gainLossDb = { value: stochasticGainLossDb(bits), unit: "dB", formula: "−10·log10([sin(π/2^B)/(π/2^B)]⁴)", source: "derived: stochastic rounding's mean phasor E[e^{jε}] = [sin(π/2^B)/(π/2^B)]² (twice nearest rounding's loss in dB)" };
    rmsPhaseErrorDeg = { value: lsbDeg * STOCHASTIC_RMS_LSB, unit: "deg", formula: "LSB/√6", source: "derived: stochastic rounding, E[e²] = ∫₀¹ f(1−f) df = LSB²/6" };
    const why = "randomized rounding leaves no periodic error, so no periodic quantisation lobe (Smith & Guo, IEEE Trans. AP-31, 1983); its errors raise the random-error floor instead";
    quantLobe = na("dB", why);
    sawtooth = na("dB", why);
  } else {
    const why = `no published estimate for the ${method} quantizer (it moves codes per beam on purpose; compare it with nearest rounding)`;
    gainLossDb = na("dB", why);
    rmsPhaseErrorDeg = na("deg", why);
    quantLobe = na("dB", why);
    sawtooth = na("dB", why);
  }

  // ---- attenuator
  let rmsAmpErrorDb: TheoryValue, attenGainChangeDb: TheoryValue;
  let roundingErrorPower = 0; // the attenuator's part of the sidelobe floor (AttenFacts.roundingErrorPower)
  let clippedElements = 0;
  let clippingRms = 0;
  if (plan.attenStates) {
    rmsAmpErrorDb = na("dB", measuredWhy);
    attenGainChangeDb = na("dB", measuredWhy);
  } else if (method !== "nearest" && method !== "randomized") {
    // a searching quantizer (optimized) moves attenuation codes per beam: the codes here are not its codes
    const why = `the ${method} quantizer chooses attenuation codes per beam, so no estimate from the rounded codes applies`;
    rmsAmpErrorDb = na("dB", why);
    attenGainChangeDb = na("dB", why);
  } else {
    const f = attenFacts(plan);
    roundingErrorPower = f.roundingErrorPower;
    clippedElements = f.clipped;
    clippingRms = f.n ? Math.sqrt(f.clipSq / f.n) : 0;
    const step = plan.attenStepDb;
    attenGainChangeDb = {
      value: f.gainChangeDb,
      unit: "dB",
      formula: "−20·log10(Σ realized amplitude / Σ tapered amplitude)",
      source: "derived: the attenuation codes are known per element; phase errors independent of amplitude",
      note: f.clipped ? `${f.clipped} clipped element(s) run louder than the taper asks, so the realized beam can exceed the tapered ideal (negative loss)` : "attenuator rounding only",
    };
    if (plan.attenBits === 0) {
      rmsAmpErrorDb = {
        value: clippingRms,
        unit: "dB",
        formula: "rms of A_n (no attenuator: none of the commanded attenuation is applied)",
        source: "derived: with no attenuator every amplitude error is the unapplied A_n = (g_n − G_ref) − 20·log10(a_n)",
        note: "all of it clipping; step/√12 does not apply",
      };
    } else {
      // The attenuator's rounding is known per element before any beam (ideal parts; the attenuation A_n is
      // beam-independent), so the estimate is the rms of the actual rounding errors A_n − q_n·step of the
      // unclipped elements beside the exact excess of the clipped ones. The uniform-error rule step/√12
      // holds only for those rounded elements, and only when their A_n spread over the step.
      const roundingVar = f.offGrid ? (step * step) / 12 : 0;
      const total = f.n ? Math.sqrt((f.roundSq + f.clipSq) / f.n) : 0;
      const uniform = f.n ? Math.sqrt((f.offGrid * roundingVar + f.clipSq) / f.n) : 0;
      const roundingRms = f.rounded ? Math.sqrt(f.roundSq / f.rounded) : 0;
      rmsAmpErrorDb = {
        value: total,
        unit: "dB",
        formula: f.clipped ? "√((Σ_rounded (A_n − q_n·step)² + Σ_clipped (A_n − range)²)/N)" : "√(Σ (A_n − q_n·step)²/N)",
        source: `derived: the rounding of each element's commanded attenuation A_n to the step (code q_n), known per element${f.clipped ? "; a clipped element's error is its exact excess over the range" : ""}`,
        note:
          `the ${f.rounded} rounded attenuation(s) (enabled elements × frequencies, ${f.rounded - f.offGrid} of them on a whole step, without error) have ${roundingRms.toFixed(3)} dB rms error; common practice's uniform rounding gives step/√12 = ${(step / Math.sqrt(12)).toFixed(3)} dB` +
          (f.clipped ? `; clipping of ${f.clipped} element(s) alone gives ${clippingRms.toFixed(3)} dB rms over the enabled elements` : "") +
          `; step/√12 over the off-step elements only would give ${uniform.toFixed(3)} dB`,
      };
    }
  }

  const expectedGainLossDb: TheoryValue =
    gainLossDb.value !== null && attenGainChangeDb.value !== null
      ? { value: gainLossDb.value + attenGainChangeDb.value, unit: "dB", formula: "phase term + attenuator term", source: "derived: |AF_realized/AF_ideal| ≈ (Σ realized / Σ tapered amplitude)·|E[e^{jε}]|" }
      : na("dB", gainLossDb.value === null ? (gainLossDb.note ?? "") : (attenGainChangeDb.note ?? ""));

  // ---- random-error floor: phase variance plus the rounding (not clipping) part of the amplitude error
  let floor: TheoryValue;
  if (rmsPhaseErrorDeg.value === null || measured) floor = na("dB", rmsPhaseErrorDeg.note ?? measuredWhy);
  else {
    const sigPhase = (rmsPhaseErrorDeg.value * Math.PI) / 180;
    // derived: the floor is the error pattern's mean power over u-v space, E|Σ a_n ε_n|²/|Σ a_n|² =
    // Σ a_n² σ_n²/|Σ a_n|²; the phase errors are random with variance σ_φ², the attenuator's rounding errors
    // ε_n are known per element (ideal parts, beam-independent), so they enter as they are (an element on a
    // whole step adds nothing); with equal variances this is σ²/(η·N)
    const sigma2 = sigPhase ** 2 + roundingErrorPower;
    floor = { value: 10 * Math.log10(sigma2 / (eta * nEnabled)), unit: "dB", formula: "σ²/(η·N)", source: "Mailloux, ch. 7 (from memory); σ² = phase error variance + the a²-weighted mean square of each element's actual attenuator rounding error (derived: Σa_n²σ_n²/|Σa_n|²; clipping is a deterministic taper change, not a random error)" };
  }

  return {
    quantizer: method,
    gainLossDb,
    attenGainChangeDb,
    expectedGainLossDb,
    rmsPhaseErrorDeg,
    rmsAmpErrorDb,
    quantizationLobeDb: quantLobe,
    quantizationLobeSawtoothDb: sawtooth,
    randomSidelobeFloorDb: floor,
    taperEfficiency: eta,
    clippedElements,
    clippingRmsAmpErrorDb: clippingRms,
  };
}

/** `plan` with another part and quantizer (a sweep variant); the measured state tables stay. */
export function planForPart(plan: Plan, part: { phaseBits: number; attenBits: number; attenStepDb: number; attenStepExact: string; quantizer: string }): Plan {
  return { ...plan, phaseBits: part.phaseBits, attenBits: part.attenBits, attenStepDb: part.attenStepDb, attenStepExact: part.attenStepExact, quantizer: { ...plan.quantizer, method: part.quantizer as Plan["quantizer"]["method"] } };
}

/** The estimates in the order `build`, `report` and `sweep` print them. */
export function theoryRows(t: Theory): { key: string; label: string; v: TheoryValue; digits: number }[] {
  return [
    { key: "gainLossDb", label: "gain loss, phase quantisation", v: t.gainLossDb, digits: 3 },
    { key: "attenGainChangeDb", label: "gain change, attenuator", v: t.attenGainChangeDb, digits: 3 },
    { key: "expectedGainLossDb", label: "expected gain loss", v: t.expectedGainLossDb, digits: 3 },
    { key: "rmsPhaseErrorDeg", label: "rms phase error", v: t.rmsPhaseErrorDeg, digits: 3 },
    { key: "rmsAmpErrorDb", label: "rms amplitude error", v: t.rmsAmpErrorDb, digits: 3 },
    { key: "randomSidelobeFloorDb", label: "random-error sidelobe floor", v: t.randomSidelobeFloorDb, digits: 1 },
    { key: "quantizationLobeDb", label: "periodic quantisation lobe", v: t.quantizationLobeDb, digits: 2 },
  ];
}

/**
 * Why gain loss can be negative, for wherever it is printed: the reference is the
 * tapered ideal, and clipped elements run louder than the taper asks. Null when no
 * beam has a negative gain loss.
 */
export function negativeGainLossNote(t: Theory, negativeBeams: number, beams: number): string | null {
  if (negativeBeams <= 0) return null;
  const head = `gain loss is negative on ${negativeBeams} of ${beams} beam(s): it is referred to the tapered ideal (the taper at the commanded direction), so realized weights that add up louder than the taper show as a gain`;
  if (t.clippedElements > 0)
    return `${head}. ${t.clippedElements} element(s) are clipped: they need more attenuation than the attenuator's range and run louder than the taper asks (the attenuator term of the estimates: ${t.attenGainChangeDb.value === null ? "n/a" : `${t.attenGainChangeDb.value.toFixed(3)} dB`}); the same clipping puts ${t.clippingRmsAmpErrorDb.toFixed(3)} dB rms into the amplitude error. A wider attenuator range (more bits) removes both`;
  const g = t.attenGainChangeDb.value;
  if (g !== null && g < 0) return `${head}: rounding the attenuation codes leaves the realized amplitudes ${(-g).toFixed(3)} dB above the taper in sum (the attenuator term of the estimates)`;
  return `${head} (on a small array, random phase errors can add up favourably)`;
}
