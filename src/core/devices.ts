/**
 * One beam memory per beamformer IC: which device and channel each element is on, and
 * where each (frequency, beam, channel) word sits in that device's memory.
 *
 *   address(f, b, c) = base + (f·beams + b)·beamStride + c·channelStride   (words)
 *
 * Pure: the loader (src/io/scenario.ts) resolves the element → (device, channel)
 * assignment and reports problems; this module builds the map, checks the layout and
 * answers address questions for writers, verify, check and diff.
 */

export type DeviceFormat = "bin" | "mem" | "hex";
export const DEVICE_FORMATS: readonly DeviceFormat[] = ["bin", "mem", "hex"];

export interface DeviceSpec {
  channels: number;
  base: number;
  beamStride: number;
  channelStride: number;
  /** Word at addresses no channel uses (default: the off word). */
  fill: number;
  formats: DeviceFormat[];
  /** Where the assignment came from. */
  source: "map" | "elements" | "default";
  /** Per element (table order): device id and channel. */
  device: Int32Array;
  channel: Int32Array;
}

/** Largest image one device may hold (Intel HEX's 32-bit byte addresses). */
export const MAX_IMAGE_BYTES = 2 ** 32;
export const MAX_DEVICE_CHANNELS = 1024;

export interface DeviceInfo {
  id: number;
  /** element index (table order) of each channel, -1 when unused; length = channels */
  elementOfChannel: Int32Array;
  /** used channels, ascending */
  used: number[];
  /** words in the image: last used address + 1 */
  words: number;
  /** every used address lies within one beam block (c·channelStride < beamStride): the image is written in address order beam by beam */
  sequential: boolean;
}

export interface DeviceMap {
  spec: DeviceSpec;
  /** frequencies × beams */
  blocks: number;
  /** ascending device id */
  devices: DeviceInfo[];
}

export interface LayoutProblem {
  /** JSON pointer relative to /devices */
  pointer: string;
  message: string;
}

export function defaultAssignment(count: number, channels: number): { device: Int32Array; channel: Int32Array } {
  const device = new Int32Array(count);
  const channel = new Int32Array(count);
  for (let e = 0; e < count; e++) {
    device[e] = Math.floor(e / channels);
    channel[e] = e % channels;
  }
  return { device, channel };
}

/** The devices of a spec, ascending by id. Assumes the assignment has no duplicates and channels < spec.channels (the loader checks). */
export function buildDeviceMap(spec: DeviceSpec, blocks: number): DeviceMap {
  const byId = new Map<number, DeviceInfo>();
  for (let e = 0; e < spec.device.length; e++) {
    const id = spec.device[e]!;
    let d = byId.get(id);
    if (!d) {
      d = { id, elementOfChannel: new Int32Array(spec.channels).fill(-1), used: [], words: 0, sequential: true };
      byId.set(id, d);
    }
    d.elementOfChannel[spec.channel[e]!] = e;
  }
  const devices = [...byId.values()].sort((a, b) => a.id - b.id);
  for (const d of devices) {
    for (let c = 0; c < spec.channels; c++) if (d.elementOfChannel[c]! >= 0) d.used.push(c);
    const cmax = d.used[d.used.length - 1]!;
    d.words = lastAddress(spec, blocks, cmax) + 1;
    d.sequential = cmax * spec.channelStride < spec.beamStride;
  }
  return { spec, blocks, devices };
}

export function address(spec: Pick<DeviceSpec, "base" | "beamStride" | "channelStride">, block: number, channel: number): number {
  return spec.base + block * spec.beamStride + channel * spec.channelStride;
}

function lastAddress(spec: DeviceSpec, blocks: number, cmax: number): number {
  return address(spec, blocks - 1, cmax);
}

/** (block, channel) at a word address of a device, or null for an address no channel uses. */
export function locate(map: DeviceMap, d: DeviceInfo, addr: number): { block: number; channel: number; element: number } | null {
  const s = map.spec;
  for (const c of d.used) {
    const r = addr - s.base - c * s.channelStride;
    if (r < 0 || r % s.beamStride !== 0) continue;
    const block = r / s.beamStride;
    if (block < map.blocks) return { block, channel: c, element: d.elementOfChannel[c]! };
  }
  return null;
}

function gcd(a: number, b: number): number {
  while (b) [a, b] = [b, a % b];
  return a;
}

/**
 * Layout problems: two (block, channel) pairs on one address of a device, an image past
 * 4 GiB. Exact: pairs collide iff Δblock·S = Δc·T, i.e. Δblock = k·T/g, Δc = k·S/g.
 */
export function layoutProblems(map: DeviceMap, wordBytes: number, describeBlock: (block: number) => string): LayoutProblem[] {
  const s = map.spec;
  const out: LayoutProblem[] = [];
  const g = gcd(s.beamStride, s.channelStride);
  const sp = s.beamStride / g;
  const tp = s.channelStride / g;
  let tooBig: DeviceInfo | null = null;
  for (const d of map.devices) {
    if (d.words * wordBytes > MAX_IMAGE_BYTES && !tooBig) tooBig = d;
    if (out.length) continue;
    for (let k = 1; k * sp <= s.channels - 1 && k * tp <= map.blocks - 1 && !out.length; k++) {
      for (const c1 of d.used) {
        const c2 = c1 + k * sp;
        if (c2 >= s.channels || d.elementOfChannel[c2]! < 0) continue;
        const blk = k * tp;
        const addr = address(s, 0, c2);
        if (s.channelStride <= s.beamStride) {
          // then Δc·T ≥ S: the beam stride is narrower than the channels' span
          const span = s.channelStride * (d.used[d.used.length - 1]! - d.used[0]!) + 1;
          out.push({
            pointer: "/address/beamStride",
            message: `beamStride ${s.beamStride} is smaller than the ${span} words the channels of device ${d.id} span (channels ${d.used[0]}–${d.used[d.used.length - 1]}, channelStride ${s.channelStride}): ${describeBlock(blk)} channel ${c1} and ${describeBlock(0)} channel ${c2} would share address ${addr}; expected a beamStride ≥ ${span}`,
          });
        } else {
          out.push({
            pointer: "/address",
            message: `overlapping addresses on device ${d.id}: ${describeBlock(blk)} channel ${c1} and ${describeBlock(0)} channel ${c2} both map to address ${addr} (base ${s.base}, beamStride ${s.beamStride}, channelStride ${s.channelStride}); expected every (beam, channel) at its own address`,
          });
        }
        break;
      }
    }
  }
  if (tooBig)
    out.push({
      pointer: "/address",
      message: `device ${tooBig.id}'s image would hold ${tooBig.words} words (${tooBig.words * wordBytes} bytes); expected at most ${MAX_IMAGE_BYTES} bytes (4 GiB, the reach of Intel HEX addresses): lower base or the strides`,
    });
  return out;
}

/** Sorted word addresses → inclusive ranges; two neighbours merge when only unused addresses lie between them. */
export function addressRanges(map: DeviceMap, d: DeviceInfo, sorted: ArrayLike<number> & Iterable<number>): [number, number][] {
  const out: [number, number][] = [];
  for (const a of sorted) {
    const last = out[out.length - 1];
    if (last && (a === last[1] + 1 || (a - last[1] <= map.spec.beamStride && onlyUnusedBetween(map, d, last[1], a)))) last[1] = a;
    else out.push([a, a]);
  }
  return out;
}

function onlyUnusedBetween(map: DeviceMap, d: DeviceInfo, a: number, b: number): boolean {
  for (let x = a + 1; x < b; x++) if (locate(map, d, x)) return false;
  return true;
}

/** Time to load a whole image over a serial bus: every word costs wordBits + overheadBits clocks. */
export function loadSeconds(words: number, wordBits: number, overheadBits: number, clockHz: number): number {
  return (words * (wordBits + overheadBits)) / clockHz;
}
