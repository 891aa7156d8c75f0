import { configure } from "safe-stable-stringify";

const stringify = configure({ deterministic: true, strict: true, bigint: false, circularValue: Error });

/** Deterministic JSON: sorted keys; NaN, Infinity and cycles are errors, not silent nulls. */
export const stableJson: (value: unknown, replacer?: ((key: string, value: unknown) => unknown) | (number | string)[] | null, space?: string | number) => string = stringify as never;
