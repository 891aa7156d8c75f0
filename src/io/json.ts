import { createRequire } from "node:module";

type Stringify = (value: unknown, replacer?: ((key: string, value: unknown) => unknown) | (number | string)[] | null, space?: string | number) => string;
let stringify: Stringify | null = null;

/** Deterministic JSON: sorted keys; NaN, Infinity and cycles are errors, not silent nulls. safe-stable-stringify is loaded on first use (a run that prints no JSON never loads it). */
export const stableJson: Stringify = (value, replacer, space) => {
  if (!stringify) {
    const { configure } = createRequire(import.meta.url)("safe-stable-stringify") as typeof import("safe-stable-stringify");
    stringify = configure({ deterministic: true, strict: true, bigint: false, circularValue: Error }) as never as Stringify;
  }
  return stringify(value, replacer, space);
};
