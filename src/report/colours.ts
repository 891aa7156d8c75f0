/**
 * The report's colours (our own). The heat ramp runs dark indigo → slate blue → teal →
 * green → pale straw with lightness rising monotonically, so maps read in greyscale
 * print and for the common colour-vision deficiencies; series are told apart by dash
 * and marker as well as colour.
 */
export const RAMP: [number, number, number][] = [
  [27, 26, 58],
  [47, 75, 124],
  [31, 138, 138],
  [124, 196, 122],
  [242, 232, 160],
];

export function rampColour(t: number): [number, number, number] {
  const x = Math.max(0, Math.min(1, Number.isFinite(t) ? t : 0)) * (RAMP.length - 1);
  const i = Math.min(RAMP.length - 2, Math.floor(x));
  const f = x - i;
  const a = RAMP[i]!, b = RAMP[i + 1]!;
  return [Math.round(a[0] + f * (b[0] - a[0])), Math.round(a[1] + f * (b[1] - a[1])), Math.round(a[2] + f * (b[2] - a[2]))];
}

/** Series and marker colours. */
export const INK = {
  text: "#1b1b1b",
  axis: "#5c5c5c",
  grid: "#e3e1da",
  ideal: "#6f6f6f",
  realized: "#1d3557",
  accent: "#b5381f",
  commanded: "#ffffff",
  outside: "#d9d6cf",
  disabled: "#111111",
  clipped: "#b5381f",
};
