/**
 * Register-word layout: bit fields packed into a word of `bits` bits (1 … 32).
 * Field names `phase` and `atten` carry the codes; any other field is a constant
 * (`value`), e.g. an enable or load bit the beamformer chip expects.
 */
import type { Problem } from "./errors.js";

export interface WordField {
  name: string;
  shift: number;
  width: number;
  /** Constant value for fields other than phase/atten. */
  value?: number;
}

export interface WordLayout {
  bits: number;
  /** ⌈bits/8⌉ */
  bytes: number;
  off: number;
  fields: WordField[];
}

export interface PackPlan {
  phaseShift: number;
  phaseMask: number;
  attenShift: number;
  attenMask: number;
  hasPhase: boolean;
  hasAtten: boolean;
  constant: number;
}

export function wordBytes(bits: number): number {
  return Math.ceil(bits / 8);
}

/** Check a layout against the code widths; returns every problem found. `at` is the JSON pointer of the word object. */
export function checkLayout(layout: WordLayout, phaseBits: number, attenBits: number, at: string): Problem[] {
  const problems: Problem[] = [];
  const maxWord = layout.bits >= 32 ? 0xffffffff : 2 ** layout.bits - 1;
  if (layout.off > maxWord) problems.push({ pointer: `${at}/off`, message: `expected an off word that fits in ${layout.bits} bits (0 … ${maxWord}), got ${layout.off}` });
  const seen = new Set<string>();
  layout.fields.forEach((f, i) => {
    const p = `${at}/fields/${i}`;
    if (seen.has(f.name)) problems.push({ pointer: `${p}/name`, message: `field "${f.name}" appears twice` });
    seen.add(f.name);
    if (f.shift + f.width > layout.bits)
      problems.push({ pointer: p, message: `field "${f.name}" (bits ${f.shift}…${f.shift + f.width - 1}) runs past the ${layout.bits}-bit word` });
    if (f.name === "phase" && f.width < phaseBits)
      problems.push({ pointer: `${p}/width`, message: `field "phase" is ${f.width} bits wide but the phase shifter has ${phaseBits} bits; expected width ≥ ${phaseBits}` });
    if (f.name === "atten" && f.width < attenBits)
      problems.push({ pointer: `${p}/width`, message: `field "atten" is ${f.width} bits wide but the attenuator has ${attenBits} bits; expected width ≥ ${attenBits}` });
    if (f.name !== "phase" && f.name !== "atten") {
      if (f.value === undefined) problems.push({ pointer: p, message: `constant field "${f.name}" needs a "value" (only "phase" and "atten" take codes)` });
      else if (f.value >= 2 ** f.width) problems.push({ pointer: `${p}/value`, message: `value ${f.value} does not fit in ${f.width} bits` });
    } else if (f.value !== undefined) problems.push({ pointer: `${p}/value`, message: `field "${f.name}" takes its codes from the quantizer; remove "value"` });
    layout.fields.forEach((g, j) => {
      if (j <= i) return;
      if (f.shift < g.shift + g.width && g.shift < f.shift + f.width)
        problems.push({ pointer: `${at}/fields/${j}`, message: `field "${g.name}" overlaps field "${f.name}" (bits ${Math.max(f.shift, g.shift)}…${Math.min(f.shift + f.width, g.shift + g.width) - 1})` });
    });
  });
  if (!seen.has("phase")) problems.push({ pointer: `${at}/fields`, message: `expected a field named "phase"` });
  // without an "atten" field the attenuation codes (and with them the taper and calibration gains) never reached the words
  if (attenBits > 0 && !seen.has("atten"))
    problems.push({ pointer: `${at}/fields`, message: `expected a field named "atten" (at least ${attenBits} bits wide) for the attenuator's ${attenBits}-bit codes; without it every word would command 0 dB and the table would drop the taper and the calibration gains. Add the field, or set "attenuator": {"bits": 0} if the part has no attenuator` });
  return problems;
}

function mask(width: number): number {
  return width >= 32 ? 0xffffffff : 2 ** width - 1;
}

export function packPlan(layout: WordLayout): PackPlan {
  const ph = layout.fields.find((f) => f.name === "phase");
  const at = layout.fields.find((f) => f.name === "atten");
  let constant = 0;
  for (const f of layout.fields) if (f.value !== undefined) constant = (constant | (f.value << f.shift)) >>> 0;
  return {
    phaseShift: ph?.shift ?? 0,
    phaseMask: ph ? mask(ph.width) : 0,
    attenShift: at?.shift ?? 0,
    attenMask: at ? mask(at.width) : 0,
    hasPhase: !!ph,
    hasAtten: !!at,
    constant,
  };
}

export function packWord(pp: PackPlan, phaseCode: number, attenCode: number): number {
  let w = pp.constant;
  if (pp.hasPhase) w |= (phaseCode & pp.phaseMask) << pp.phaseShift;
  if (pp.hasAtten) w |= (attenCode & pp.attenMask) << pp.attenShift;
  return w >>> 0;
}

export interface Unpacked {
  phaseCode: number;
  attenCode: number;
  /** The constant fields hold their declared values. */
  constantsOk: boolean;
}

export function unpackWord(pp: PackPlan, layout: WordLayout, word: number): Unpacked {
  const phaseCode = pp.hasPhase ? (word >>> pp.phaseShift) & pp.phaseMask : 0;
  const attenCode = pp.hasAtten ? (word >>> pp.attenShift) & pp.attenMask : 0;
  let constantsOk = true;
  for (const f of layout.fields) if (f.value !== undefined && ((word >>> f.shift) & mask(f.width)) !== f.value) constantsOk = false;
  return { phaseCode, attenCode, constantsOk };
}
