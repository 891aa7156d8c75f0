/**
 * The scenario's `devices` section → DeviceSpec: the element → (device, channel)
 * assignment from the map file, elements.csv's device/channel columns or the default
 * order, and the address layout. Every problem names the file and line or the pointer.
 */
import type { ProblemList } from "./problems.js";
import { buildDeviceMap, defaultAssignment, DEVICE_FORMATS, layoutProblems, type DeviceFormat, type DeviceSpec } from "../core/devices.js";
import type { Elements } from "../core/geometry.js";
import type { WordLayout } from "../core/words.js";
import { numberCell, type CsvTable } from "./csv.js";

export interface DeviceLoadContext {
  display: string;
  problems: ProblemList;
  file: (ref: string) => CsvTable | null;
  elements: Elements | null;
  elementLines: Map<number, number>;
  elementsFile: string;
  word: WordLayout;
  /** frequencies × beams (0 when the beams could not be read) */
  blocks: number;
  beams: number;
}

interface RawDevices {
  channels: number;
  map?: string;
  address?: { base?: number; beamStride?: number; channelStride?: number };
  fill?: number;
  formats?: string[];
}

const INTEGER_RE = /^\+?\d+$/;
/** device ids and channels are stored as Int32 */
const MAX_ID = 2 ** 31 - 1;

export function loadDevices(raw: RawDevices, ctx: DeviceLoadContext): DeviceSpec | null {
  const before = ctx.problems.count;
  const problem = (pointer: string, message: string) => ctx.problems.push({ file: ctx.display, pointer, message });
  const channels = raw.channels;
  const fill = raw.fill ?? ctx.word.off;
  if (ctx.word.bits < 32 && fill >= 2 ** ctx.word.bits) problem("/devices/fill", `expected a fill word that fits in ${ctx.word.bits} bits (0 … ${2 ** ctx.word.bits - 1}), got ${fill}`);
  else if (fill > 0xffffffff) problem("/devices/fill", `expected a fill word that fits in 32 bits, got ${fill}`);
  const formats: DeviceFormat[] = raw.formats ? DEVICE_FORMATS.filter((f) => raw.formats!.includes(f)) : [...DEVICE_FORMATS];
  const els = ctx.elements;
  let assignment: { device: Int32Array; channel: Int32Array } | null = null;
  let source: DeviceSpec["source"] = "default";
  if (raw.map !== undefined) {
    source = "map";
    const t = ctx.file(raw.map);
    if (t && els) assignment = fromMap(t, els, channels, ctx.problems);
  } else if (els && (els.device || els.channel)) {
    source = "elements";
    if (!els.device || !els.channel) ctx.problems.push({ file: ctx.elementsFile, message: `has a ${els.device ? "device" : "channel"} column but no ${els.device ? "channel" : "device"} column; expected both (or neither: then element e goes to device ⌊e / ${channels}⌋, channel e mod ${channels})` });
    else assignment = fromElementColumns(els, ctx, channels);
  } else if (els) {
    assignment = defaultAssignment(els.count, channels);
  }
  if (ctx.problems.count > before || !assignment || !els) return null;
  const spec: DeviceSpec = {
    channels,
    base: raw.address?.base ?? 0,
    beamStride: raw.address?.beamStride ?? channels,
    channelStride: raw.address?.channelStride ?? 1,
    fill,
    formats,
    source,
    device: assignment.device,
    channel: assignment.channel,
  };
  if (ctx.blocks > 0) {
    const map = buildDeviceMap(spec, ctx.blocks);
    const B = ctx.beams;
    const F = ctx.blocks / B;
    const describe = (blk: number) => (F > 1 ? `frequency ${Math.floor(blk / B)} beam ${blk % B}` : `beam ${blk}`);
    for (const p of layoutProblems(map, ctx.word.bytes, describe)) problem("/devices" + p.pointer, p.message);
  }
  return ctx.problems.count > before ? null : spec;
}

/** A (device, channel) taken twice, or a channel past the device: problems at the given places. */
class Slots {
  private readonly taken = new Map<string, { element: number; where: string }>();
  constructor(private readonly channels: number) {}
  take(device: number, channel: number, element: number, where: string, report: (column: string, message: string) => void): void {
    if (channel >= this.channels) {
      report("channel", `channel ${channel} does not exist on a ${this.channels}-channel device; expected 0 … ${this.channels - 1}`);
      return;
    }
    const key = `${device}/${channel}`;
    const prev = this.taken.get(key);
    if (prev) report("channel", `element ${element} and element ${prev.element} (${prev.where}) are both on device ${device} channel ${channel}; expected one element per channel`);
    else this.taken.set(key, { element, where });
  }
}

function fromMap(t: CsvTable, els: Elements, channels: number, problems: ProblemList): { device: Int32Array; channel: Int32Array } | null {
  const before = problems.count;
  const index = new Map<number, number>();
  els.ids.forEach((id, i) => index.set(id, i));
  const device = new Int32Array(els.count).fill(-1);
  const channel = new Int32Array(els.count).fill(-1);
  const seen = new Map<number, number>();
  const slots = new Slots(channels);
  for (const r of t.rows) {
    const id = numberCell(t, r, "element", problems, { integer: true, min: 0, max: MAX_ID });
    const dev = numberCell(t, r, "device", problems, { integer: true, min: 0, max: MAX_ID });
    const ch = numberCell(t, r, "channel", problems, { integer: true, min: 0, max: MAX_ID });
    if (!id || !dev || !ch) continue;
    const report = (column: string, message: string) => problems.push({ file: t.file, line: r.line, column, message });
    const i = index.get(id.value);
    if (i === undefined) {
      report("element", `element ${id.value} is not in the array; expected a row for each of the array's elements only`);
      continue;
    }
    const prev = seen.get(id.value);
    if (prev !== undefined) {
      report("element", `element ${id.value} is listed twice (also on line ${prev})`);
      continue;
    }
    seen.set(id.value, r.line);
    slots.take(dev.value, ch.value, id.value, `line ${r.line}`, report);
    device[i] = dev.value;
    channel[i] = ch.value;
  }
  const missing = Array.from(els.ids).filter((id) => !seen.has(id));
  if (missing.length && problems.count === before) problems.push({ file: t.file, message: `missing ${missing.length} element(s): ${missing.slice(0, 8).join(", ")}${missing.length > 8 ? ", …" : ""}; expected a row for every element of the array` });
  return problems.count > before ? null : { device, channel };
}

function fromElementColumns(els: Elements, ctx: DeviceLoadContext, channels: number): { device: Int32Array; channel: Int32Array } | null {
  const before = ctx.problems.count;
  const device = new Int32Array(els.count);
  const channel = new Int32Array(els.count);
  const slots = new Slots(channels);
  for (let i = 0; i < els.count; i++) {
    const id = els.ids[i]!;
    const line = ctx.elementLines.get(id);
    const report = (column: string, message: string) => ctx.problems.push({ file: ctx.elementsFile, ...(line !== undefined ? { line } : {}), column, message });
    const d = els.device![i]!;
    const c = els.channel![i]!;
    let ok = true;
    for (const [col, v] of [["device", d], ["channel", c]] as const)
      if (!INTEGER_RE.test(v) || Number(v) > MAX_ID) {
        report(col, `expected a whole number from 0 to ${MAX_ID} (the scenario's "devices" reads this column), got "${v}"`);
        ok = false;
      }
    if (!ok) continue;
    slots.take(Number(d), Number(c), id, `line ${line}`, report);
    device[i] = Number(d);
    channel[i] = Number(c);
  }
  return ctx.problems.count > before ? null : { device, channel };
}
