/** The first difference between two JSON documents, by JSON pointer (verify's manifest check; report's consistency check). */

/** One key as a JSON pointer segment (RFC 6901: "~" → "~0", "/" → "~1"). */
export function pointerPart(k: string): string {
  return k.replace(/~/g, "~0").replace(/\//g, "~1");
}

function clip(s: string): string {
  return s.length > 160 ? s.slice(0, 157) + "…" : s;
}

function show(v: unknown): string {
  return v === undefined ? "(absent)" : clip(JSON.stringify(v) ?? String(v));
}

/** JSON pointer of the first value where two documents differ (keys in sorted order, as written). */
export function firstDifference(a: unknown, b: unknown, ptr = ""): { pointer: string; expected: string; found: string } | null {
  if (Object.is(a, b)) return null;
  const obj = (x: unknown) => typeof x === "object" && x !== null;
  if (!obj(a) || !obj(b) || Array.isArray(a) !== Array.isArray(b)) return { pointer: ptr || "/", expected: show(a), found: show(b) };
  if (Array.isArray(a) && Array.isArray(b)) {
    for (let i = 0; i < Math.max(a.length, b.length); i++) {
      const d = firstDifference(a[i], b[i], `${ptr}/${i}`);
      if (d) return d;
    }
    return null;
  }
  const ao = a as Record<string, unknown>, bo = b as Record<string, unknown>;
  for (const k of [...new Set([...Object.keys(ao), ...Object.keys(bo)])].sort()) {
    const d = firstDifference(ao[k], bo[k], `${ptr}/${pointerPart(k)}`);
    if (d) return d;
  }
  return null;
}
