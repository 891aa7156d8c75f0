/**
 * Device images in the workflows: what the manifest records, the checks `verify`
 * runs on every image (bin, mem, hex decoded back into words), the per-device view of
 * a diff (words changed, address ranges to reload) and the per-device facts of `check`.
 */
import { createRequire } from "node:module";
import { existsSync } from "node:fs";
import { MAX_MANIFEST_BYTES, readFolderFile } from "../io/readbuild.js";
import { join } from "node:path";
import { address, addressRanges, buildDeviceMap, loadSeconds, locate, type DeviceFormat, type DeviceInfo, type DeviceMap, type DeviceSpec } from "../core/devices.js";
import type { Plan } from "../core/plan.js";
import { DEVICE_MAP_FILE, deviceFile } from "../formats/device-images.js";
import { ImageFormatError, openImageReader, type ImageReader } from "../formats/device-read.js";

export interface DeviceManifest {
  channels: number;
  address: { base: number; beamStride: number; channelStride: number };
  fill: number;
  formats: DeviceFormat[];
  source: DeviceSpec["source"];
  map: string;
  /** one entry per device, ascending id */
  list: { id: number; channelsUsed: number; words: number; bytes: number }[];
}

export function deviceManifest(map: DeviceMap, wordBytes: number): DeviceManifest {
  const s = map.spec;
  return {
    channels: s.channels,
    address: { base: s.base, beamStride: s.beamStride, channelStride: s.channelStride },
    fill: s.fill,
    formats: s.formats,
    source: s.source,
    map: DEVICE_MAP_FILE,
    list: map.devices.map((d) => ({ id: d.id, channelsUsed: d.used.length, words: d.words, bytes: d.words * wordBytes })),
  };
}

/** The parts of a manifest the device workflows read. */
export interface BuildInfo {
  counts: { frequencies: number; beams: number; elements: number };
  frequenciesHz: string[];
  elementIds: number[];
  layout: { bytes: number };
  files: Record<string, { sha256: string }>;
  devices?: DeviceManifest;
}

/** The device map of a build folder: map.csv and the manifest's address layout. */
export function readDeviceMap(dir: string, m: BuildInfo): DeviceMap {
  const dm = m.devices!;
  // the fixed name, read as every folder file is (no link followed, regular files only, bounded): the
  // manifest's "map" was joined to the folder, and "../../../dev/zero" or a link to it was read for ever
  const text = readFolderFile(dir, DEVICE_MAP_FILE, MAX_MANIFEST_BYTES);
  if (!text) throw new ImageFormatError(`${DEVICE_MAP_FILE} is missing`);
  const { parse } = createRequire(import.meta.url)("csv-parse/sync") as typeof import("csv-parse/sync"); // loaded on first use
  let rows: string[][];
  try {
    rows = parse(text, { from_line: 1 }) as string[][];
  } catch (e) {
    // a ragged or badly quoted row was an internal error (exit 3)
    const err = e as { lines?: number; message?: string };
    throw new ImageFormatError(`${DEVICE_MAP_FILE}${err.lines !== undefined ? `, line ${err.lines}` : ""}: not valid CSV (${String(err.message ?? e)})`);
  }
  if (rows[0]?.join(",") !== "device,channel,element") throw new ImageFormatError(`${dm.map}: expected the header "device,channel,element"`);
  const index = new Map<number, number>();
  m.elementIds.forEach((id, i) => index.set(id, i));
  const device = new Int32Array(m.counts.elements).fill(-1);
  const channel = new Int32Array(m.counts.elements).fill(-1);
  const taken = new Set<string>();
  rows.slice(1).forEach((r, k) => {
    const [d, c, e] = r.map(Number) as [number, number, number];
    const i = index.get(e);
    if (r.length !== 3 || ![d, c, e].every((x) => Number.isInteger(x) && x >= 0) || i === undefined || device[i] !== -1 || c >= dm.channels || taken.has(`${d}/${c}`))
      throw new ImageFormatError(`${dm.map}, line ${k + 2}: "${r.join(",")}" is not a new (device, channel, element) of this build`);
    taken.add(`${d}/${c}`);
    device[i] = d;
    channel[i] = c;
  });
  const missing = m.elementIds.filter((_, i) => device[i] === -1);
  if (missing.length) throw new ImageFormatError(`${dm.map}: element(s) ${missing.slice(0, 8).join(", ")} are missing`);
  const spec: DeviceSpec = { channels: dm.channels, ...dm.address, fill: dm.fill, formats: dm.formats, source: dm.source, device, channel };
  return buildDeviceMap(spec, m.counts.frequencies * m.counts.beams);
}

export interface DeviceCheck {
  check: string;
  ok: boolean;
  detail: string;
}

export interface DeviceMismatch {
  file: string;
  device: number;
  address: number;
  frequency_hz: string;
  beam: number | null;
  channel: number | null;
  element: number | null;
  expected: number;
  found: number;
}

/**
 * The table words recomputed from the recorded inputs, streamed beam block by beam block
 * ([element] words of block f·beams + b). One call is one full pass of the table engine.
 */
export interface WordPass {
  /** what the words come from, e.g. "recomputed from inputs/scenario.json" */
  name: string;
  run(sink: (block: number, words: ArrayLike<number>) => void): void;
}

const hexw = (w: number, wb: number) => "0x" + (w >>> 0).toString(16).toUpperCase().padStart(2 * wb, "0");

/** Words of decoded and expected images held at once (Uint32 each: 64 MiB in all). */
export const DEVICE_CHECK_BUDGET_WORDS = 1 << 24;

/**
 * verify's device checks: map.csv against the manifest and the recomputed assignment,
 * then every image in every format decoded and compared, address by address, with the
 * recomputed words (padding must hold the fill word). The first disagreement is named by
 * device, address, beam, channel and element.
 *
 * Memory: images are streamed in windows of at most `windowWords` addresses (default:
 * half the budget, at least 4096), and windows are checked in batches of at most
 * `budgetWords` words (decoded + expected together); each batch takes one pass of the
 * table engine. So memory is bounded by the budget whatever the number or the size of
 * the images (up to the 4 GiB an image may hold); a build whose images all fit the budget
 * takes one extra pass, an image larger than the window one pass per window.
 */
export function verifyDevices(dir: string, m: BuildInfo, fresh: DeviceSpec | null, words: WordPass, budgetWords = DEVICE_CHECK_BUDGET_WORDS, windowWords = Math.max(1 << 12, Math.floor(budgetWords / 2))): { checks: DeviceCheck[]; first: DeviceMismatch | null } {
  const checks: DeviceCheck[] = [];
  let first: DeviceMismatch | null = null;
  const dm = m.devices!;
  let map: DeviceMap;
  try {
    map = readDeviceMap(dir, m);
  } catch (e) {
    checks.push({ check: `devices: ${DEVICE_MAP_FILE}`, ok: false, detail: (e as Error).message });
    return { checks, first };
  }
  const listed = dm.list.map((d) => `${d.id}:${d.channelsUsed}:${d.words}`).join(",");
  const mapped = map.devices.map((d) => `${d.id}:${d.used.length}:${d.words}`).join(",");
  checks.push({ check: `devices: ${DEVICE_MAP_FILE} = manifest`, ok: listed === mapped, detail: listed === mapped ? `${map.devices.length} device(s), ${dm.channels} channels each` : "the devices, channels used or image sizes in map.csv differ from the manifest's list" });
  if (fresh) {
    let bad = -1;
    for (let i = 0; i < m.counts.elements; i++) if (fresh.device[i] !== map.spec.device[i] || fresh.channel[i] !== map.spec.channel[i]) { bad = i; break; }
    const same = bad < 0 && fresh.channels === dm.channels && fresh.base === dm.address.base && fresh.beamStride === dm.address.beamStride && fresh.channelStride === dm.address.channelStride && fresh.fill === dm.fill;
    checks.push({
      check: `devices: ${DEVICE_MAP_FILE} and layout = recomputed from the scenario`,
      ok: same,
      detail: same ? `${fresh.source === "map" ? "map file" : fresh.source === "elements" ? "elements.csv device/channel columns" : "default order"}` : bad >= 0 ? `element ${m.elementIds[bad]}: map.csv says device ${map.spec.device[bad]} channel ${map.spec.channel[bad]}, the scenario gives device ${fresh.device[bad]} channel ${fresh.channel[bad]}` : "the channels, address layout or fill word differ from the scenario's",
    });
  }
  const wb = m.layout.bytes;
  const B = m.counts.beams;
  // per format: how many images differ (and the first), which could not be read, words read
  const result = new Map(dm.formats.map((f) => [f, { mm: null as DeviceMismatch | null, devices: 0, unreadable: [] as string[], words: 0, images: 0 }]));
  interface Image { fmt: DeviceFormat; d: DeviceInfo; file: string; reader: ImageReader | null; words: number; settled: boolean }
  const unreadable = (im: Image, e: unknown) => {
    const code = (e as NodeJS.ErrnoException).code;
    result.get(im.fmt)!.unreadable.push(`${im.file}: ${e instanceof ImageFormatError ? e.message : code === "ENOENT" ? "missing" : (e as Error).message}`);
    im.settled = true;
    im.reader?.close();
    im.reader = null;
  };
  /** The first address of window [a0, a0 + expected.length) where the image disagrees; settles the image. */
  const compare = (im: Image, a0: number, img: Uint32Array, expected: Uint32Array) => {
    const r = result.get(im.fmt)!;
    const n = Math.max(expected.length, img.length);
    for (let i = 0; i < n; i++) {
      if (expected[i] === img[i] && i < expected.length && i < img.length) continue;
      const a = a0 + i;
      const at = a < im.d.words ? locate(map, im.d, a) : null;
      const mm: DeviceMismatch = {
        file: im.file,
        device: im.d.id,
        address: a,
        frequency_hz: at ? m.frequenciesHz[Math.floor(at.block / B)]! : "",
        beam: at ? at.block % B : null,
        channel: at ? at.channel : null,
        element: at ? m.elementIds[at.element]! : null,
        expected: i < expected.length ? expected[i]! : -1,
        found: i < img.length ? img[i]! : -1,
      };
      if (!r.devices) r.mm = mm;
      r.devices++;
      im.settled = true;
      return mm;
    }
    return null;
  };
  // batches of decoded windows; one pass of the table engine fills each batch's expected windows
  let batch: { im: Image; a0: number; img: Uint32Array; expected: Uint32Array; last: boolean }[] = [];
  let held = 0;
  const flush = () => {
    if (!batch.length) return;
    const spec = map.spec;
    words.run((blk, w) => {
      for (const it of batch) {
        const n = it.expected.length;
        for (const c of it.im.d.used) {
          const i = address(spec, blk, c) - it.a0;
          if (i >= 0 && i < n) it.expected[i] = w[it.im.d.elementOfChannel[c]!]!;
        }
      }
    });
    // compared in format order, then device and address order (the first mismatch is the first in that order)
    for (const fmt of dm.formats)
      for (const it of batch) {
        if (it.im.fmt !== fmt || it.im.settled) continue;
        const mm = compare(it.im, it.a0, it.img, it.expected);
        if (mm && !first) first = mm;
        if (it.last && !it.im.settled) {
          const r = result.get(fmt)!;
          r.images++;
          r.words += it.im.words;
          it.im.settled = true;
        }
      }
    batch = [];
    held = 0;
  };
  for (const d of map.devices)
    for (const fmt of dm.formats) {
      const im: Image = { fmt, d, file: deviceFile(d.id, fmt), reader: null, words: 0, settled: false };
      try {
        im.reader = openImageReader(fmt, join(dir, im.file), wb);
      } catch (e) {
        unreadable(im, e);
        continue;
      }
      for (let a0 = 0; a0 < d.words && !im.settled; a0 += windowWords) {
        const want = Math.min(windowWords, d.words - a0);
        const last = a0 + want >= d.words;
        let img: Uint32Array;
        try {
          // the last window reads one word more: a longer file shows as a word past the end
          img = im.reader!.read(last ? want + 1 : want);
          if (last && img.length <= want) im.reader!.read(1); // to the end: trailing records, the end record
        } catch (e) {
          unreadable(im, e);
          break;
        }
        im.words += img.length;
        batch.push({ im, a0, img, expected: new Uint32Array(want).fill(map.spec.fill), last });
        held += img.length + want;
        if (img.length < want) break; // the file ended early: this window shows where
        if (held >= budgetWords) flush();
      }
      im.reader?.close();
      im.reader = null;
    }
  flush();
  for (const fmt of dm.formats) {
    const r = result.get(fmt)!;
    const { unreadable, mm } = r;
    if (unreadable.length) checks.push({ check: `devices: dev-*.${fmt} readable`, ok: false, detail: unreadable.slice(0, 4).join("; ") + (unreadable.length > 4 ? `; … ${unreadable.length - 4} more` : "") });
    const what = (x: number) => (x < 0 ? "nothing (past the end)" : hexw(x, wb));
    const detail = !mm
      ? `${r.images} image(s), ${r.words} words`
      : `${r.devices} image(s) differ; first ${mm.file}, address ${mm.address}` +
        (mm.beam !== null ? ` (frequency ${mm.frequency_hz} Hz, beam ${mm.beam}, channel ${mm.channel}, element ${mm.element})` : mm.expected >= 0 ? " (unused address: expected the fill word)" : " (past the image's end)") +
        `: expected ${what(mm.expected)}, found ${what(mm.found)}`;
    checks.push({ check: `devices: dev-*.${fmt} = ${words.name}`, ok: r.devices === 0 && !unreadable.length, detail });
  }
  return { checks, first };
}

export interface DeviceDiff {
  /** the old build had no devices, or a different map, address layout or fill word */
  layoutChanged: boolean;
  devices: number;
  devicesChanged: number;
  /** changed devices only, ascending id; address ranges inclusive, in the new build's layout */
  changed: { device: number; wordsChanged: number; ranges: [number, number][] }[];
}

/** Per device of the new build: how many words changed and which address ranges to reload. */
export function deviceDiff(dirA: string, a: BuildInfo, dirB: string, b: BuildInfo, eachChange: (fn: (c: { frequency_hz: string; beam: number; element: number }) => void) => void): DeviceDiff | null {
  if (!b.devices) return null;
  const map = readDeviceMap(dirB, b);
  const fIndex = new Map(b.frequenciesHz.map((f, i) => [f, i]));
  const eIndex = new Map(b.elementIds.map((id, i) => [id, i]));
  // per device, the changed addresses in a growing Uint32Array (4 bytes a changed word; addresses stay below 2^32)
  const byDevice = new Map<number, { a: Uint32Array; n: number }>();
  eachChange((c) => {
    const e = eIndex.get(c.element)!;
    const blk = fIndex.get(c.frequency_hz)! * b.counts.beams + c.beam;
    const id = map.spec.device[e]!;
    let list = byDevice.get(id);
    if (!list) byDevice.set(id, (list = { a: new Uint32Array(64), n: 0 }));
    if (list.n === list.a.length) {
      const grown = new Uint32Array(list.a.length * 2);
      grown.set(list.a);
      list.a = grown;
    }
    list.a[list.n++] = address(map.spec, blk, map.spec.channel[e]!);
  });
  const info = new Map(map.devices.map((d) => [d.id, d]));
  const changed = [...byDevice.entries()]
    .sort((x, y) => x[0] - y[0])
    .map(([id, list]) => {
      const addrs = list.a.subarray(0, list.n).sort();
      return { device: id, wordsChanged: list.n, ranges: addressRanges(map, info.get(id)!, addrs) };
    });
  const key = (m: BuildInfo) => (m.devices ? JSON.stringify([m.devices.channels, m.devices.address, m.devices.fill, m.files[DEVICE_MAP_FILE]?.sha256]) : "");
  return { layoutChanged: key(a) !== key(b) || !existsSync(join(dirA, DEVICE_MAP_FILE)), devices: map.devices.length, devicesChanged: changed.length, changed };
}

export function deviceDiffLines(d: DeviceDiff, limit = 16): string[] {
  const lines = [`devices: ${d.devicesChanged} of ${d.devices} device image(s) changed${d.layoutChanged ? " (the device layout differs from the old build's: reload every image in full; ranges below are in the new layout)" : ""}`];
  for (const c of d.changed.slice(0, limit)) {
    const r = c.ranges.slice(0, 6).map(([s, e]) => (s === e ? `${s}` : `${s}–${e}`));
    lines.push(`  device ${c.device}: ${c.wordsChanged} word(s) at address${c.ranges.length > 1 || c.ranges[0]![0] !== c.ranges[0]![1] ? "es" : ""} ${r.join(", ")}${c.ranges.length > 6 ? `, … (${c.ranges.length} ranges)` : ""}`);
  }
  if (d.changed.length > limit) lines.push(`  … ${d.changed.length - limit} more device(s) (--json lists them all)`);
  return lines;
}

export interface BusModel {
  clockHz: number;
  /** bits clocked per word (default: the word's bytes × 8) */
  wordBits: number;
  /** framing bits per word (command, address, chip select gaps …) */
  overheadBits: number;
}

export interface DeviceFact {
  id: number;
  channelsUsed: number;
  addressesUsed: number;
  words: number;
  bytes: number;
  loadSeconds: number | null;
}

/** check: per device, channels and addresses used, image size, full-load time over the bus. */
export function deviceFacts(plan: Plan, bus: BusModel | null): { map: DeviceMap; facts: DeviceFact[] } | null {
  if (!plan.devices) return null;
  const blocks = plan.frequenciesHz.length * plan.beams.count;
  const map = buildDeviceMap(plan.devices, blocks);
  const facts = map.devices.map((d) => ({
    id: d.id,
    channelsUsed: d.used.length,
    addressesUsed: blocks * d.used.length,
    words: d.words,
    bytes: d.words * plan.word.bytes,
    loadSeconds: bus ? loadSeconds(d.words, bus.wordBits, bus.overheadBits, bus.clockHz) : null,
  }));
  return { map, facts };
}
