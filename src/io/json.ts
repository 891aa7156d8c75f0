import { configure } from "safe-stable-stringify";

/** Deterministic JSON: sorted keys; NaN, Infinity and cycles are errors, not silent nulls. */
export const stableJson = configure({ deterministic: true, strict: true, bigint: false, circularValue: Error });
