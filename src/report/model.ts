/**
 * What the report page carries: the recorded Plan (typed arrays as base64), beams.csv
 * metrics, the CRC-32 of every beam's words, and the beam to open at. Pure: the page's
 * script and the Node side that writes it share these types and the typed-array codec.
 */
export interface PageData {
  title: string;
  /** The Plan, with every typed array replaced by { $typed, b64 }. */
  plan: unknown;
  /** beams.csv columns after frequency_hz,beam,az_deg,el_deg,u,v. */
  metricColumns: string[];
  /** base64 Float64Array [(frequency·beams + beam)·columns + column]; NaN for an empty cell. */
  metrics: string | null;
  /** base64 Uint32Array [frequency·beams + beam]: CRC-32 of that beam's words in table.bin. */
  crc: string | null;
  /** Why there are no CRCs although the manifest lists table.bin (missing, another length): the page says so on every beam. */
  crcProblem?: string;
  start: { f: number; beam: number };
}

const TYPED = { Float64Array, Float32Array, Int32Array, Uint32Array, Int16Array, Uint16Array, Int8Array, Uint8Array } as const;
type TypedName = keyof typeof TYPED;

/** Replace every typed array in `v` with { $typed, b64 } (encode: bytes → base64). */
export function encodeTyped(v: unknown, encode: (bytes: Uint8Array) => string): unknown {
  if (ArrayBuffer.isView(v) && !(v instanceof DataView)) {
    const name = v.constructor.name as TypedName;
    if (!(name in TYPED)) throw new Error(`cannot encode ${name}`);
    return { $typed: name, b64: encode(new Uint8Array(v.buffer, v.byteOffset, v.byteLength)) };
  }
  if (Array.isArray(v)) return v.map((x) => encodeTyped(x, encode));
  if (v !== null && typeof v === "object") return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, encodeTyped(x, encode)]));
  return v;
}

/** The inverse of encodeTyped (decode: base64 → bytes). */
export function reviveTyped(v: unknown, decode: (b64: string) => Uint8Array): unknown {
  if (Array.isArray(v)) return v.map((x) => reviveTyped(x, decode));
  if (v !== null && typeof v === "object") {
    const o = v as Record<string, unknown>;
    if (typeof o.$typed === "string" && typeof o.b64 === "string" && o.$typed in TYPED) {
      const bytes = decode(o.b64);
      const C = TYPED[o.$typed as TypedName];
      const copy = new Uint8Array(bytes.length);
      copy.set(bytes);
      return new C(copy.buffer, 0, bytes.length / C.BYTES_PER_ELEMENT);
    }
    return Object.fromEntries(Object.entries(o).map(([k, x]) => [k, reviveTyped(x, decode)]));
  }
  return v;
}
