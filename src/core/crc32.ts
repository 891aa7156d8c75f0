/**
 * CRC-32 (IEEE 802.3, reflected polynomial 0xEDB88320), for code that must also run in
 * a browser (the report page). Node code uses zlib.crc32; the tests check this one
 * against it and against the catalogue's check value ("123456789" → 0xCBF43926).
 */
let table: Uint32Array | null = null;

function makeTable(): Uint32Array {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
}

/** CRC-32 of `bytes`, continuing from `crc` (0 to start). */
export function crc32(bytes: Uint8Array, crc = 0): number {
  const t = (table ??= makeTable());
  let c = (crc ^ 0xffffffff) >>> 0;
  for (let i = 0; i < bytes.length; i++) c = t[(c ^ bytes[i]!) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
