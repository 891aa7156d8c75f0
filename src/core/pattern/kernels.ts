/**
 * The analysis's WebAssembly kernels (wasm/*.ts, compiled ahead of time by
 * scripts/build-wasm.mjs into src/core/pattern/wasm/). Each user takes an instance of its
 * own, with its own linear memory, sized once: views on that memory stay valid because it
 * never grows after set-up.
 */

const compiled = new Map<string, WebAssembly.Module>();

function decode(base64: string): Uint8Array<ArrayBuffer> {
  const s = atob(base64);
  const b = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) b[i] = s.charCodeAt(i);
  return b;
}

/**
 * A new instance of a kernel module whose memory holds at least `layout(instance)` bytes:
 * a number, or the kernel's own set-up call, which lays its arrays out and returns their
 * end. The memory is grown after that call, so it must only place arrays, not write them
 * (wasm/evaluator.ts's setup; wasm/fft.ts's fills a table, so the FFT passes a byte count).
 */
export function kernelInstance<T>(base64: string, layout: number | ((k: T) => number), imports: WebAssembly.Imports = {}): T & { memory: WebAssembly.Memory } {
  let m = compiled.get(base64);
  if (!m) {
    m = new WebAssembly.Module(decode(base64));
    compiled.set(base64, m);
  }
  const exports = new WebAssembly.Instance(m, imports).exports as unknown as T & { memory: WebAssembly.Memory };
  const bytes = typeof layout === "number" ? layout : layout(exports);
  const have = exports.memory.buffer.byteLength;
  if (bytes > have) exports.memory.grow(Math.ceil((bytes - have) / 65536));
  return exports;
}

/** The first byte kernels lay their arrays out from (offset 0 left unused). */
export const KERNEL_BASE = 64;
