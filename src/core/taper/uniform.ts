import type { Taper, TaperInput } from "./contract.js";

export const uniformTaper: Taper = {
  kind: "uniform",
  amplitudes(input: TaperInput): Float64Array {
    return new Float64Array(input.elements.count).fill(1);
  },
};
