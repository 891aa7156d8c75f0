import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { address, addressRanges, buildDeviceMap, defaultAssignment, layoutProblems, loadSeconds, locate, type DeviceSpec } from "../../src/core/devices.js";

function spec(over: Partial<DeviceSpec> & { device: Int32Array; channel: Int32Array }): DeviceSpec {
  return { channels: 4, base: 0, beamStride: 4, channelStride: 1, fill: 0, formats: ["bin", "mem", "hex"], source: "default", ...over };
}

describe("device address maps", () => {
  it("addresses against a hand-computed example", () => {
    // derived: the contract's formula worked by hand for 2 frequencies × 3 beams, 4 channels,
    // base 16, beamStride 6, channelStride 1: address(f, b, c) = 16 + (3f + b)·6 + c
    const s = spec({ base: 16, beamStride: 6, ...defaultAssignment(8, 4) });
    expect(address(s, 0, 0)).toBe(16);
    expect(address(s, 1, 2)).toBe(16 + 6 + 2); // beam 1 channel 2 = 24
    expect(address(s, 1 * 3 + 2, 3)).toBe(16 + 30 + 3); // frequency 1 beam 2 channel 3 = 49
    const map = buildDeviceMap(s, 6);
    // last used address 49 → 50 words per device; every channel offset (≤ 3) < beamStride 6: written in address order
    expect(map.devices.map((d) => [d.id, d.words, d.sequential])).toEqual([[0, 50, true], [1, 50, true]]);
    // element 9 of a 4-channel default order: device ⌊9/4⌋ = 2, channel 9 mod 4 = 1 (derived)
    const def = defaultAssignment(12, 4);
    expect([def.device[9], def.channel[9]]).toEqual([2, 1]);
    // locate is the inverse; 20 and 21 are padding (channels 0–3 sit at 16–19 and 22–25)
    const d = map.devices[0]!;
    expect(locate(map, d, 49)).toEqual({ block: 5, channel: 3, element: 3 });
    expect(locate(map, d, 20)).toBeNull();
    expect(locate(map, d, 15)).toBeNull();
  });

  it("a channel-major layout (beamStride 1, channelStride = beams) is valid and written positionally", () => {
    const s = spec({ beamStride: 1, channelStride: 6, ...defaultAssignment(4, 4) });
    const map = buildDeviceMap(s, 6);
    expect(layoutProblems(map, 2, String)).toEqual([]);
    expect(map.devices[0]!.sequential).toBe(false);
    expect(map.devices[0]!.words).toBe(24);
    expect(address(s, 5, 2)).toBe(17);
  });

  it("overlap detection equals a brute-force search of every (block, channel) pair", () => {
    // derived: two pairs collide iff their addresses are equal; compare with the exact rule
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 8 }),
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 1, max: 10 }),
        fc.integer({ min: 1, max: 255 }),
        (channels, S, T, blocks, usedMask) => {
          const used = Array.from({ length: channels }, (_, c) => c).filter((c) => usedMask & (1 << c));
          if (!used.length) return;
          const s = spec({ channels, beamStride: S, channelStride: T, device: new Int32Array(used.length), channel: Int32Array.from(used) });
          const map = buildDeviceMap(s, blocks);
          const seen = new Set<number>();
          let collide = false;
          for (let b = 0; b < blocks; b++)
            for (const c of used) {
              const a = address(s, b, c);
              if (seen.has(a)) collide = true;
              seen.add(a);
            }
          expect(layoutProblems(map, 2, String).length > 0).toBe(collide);
          if (!collide) {
            // and locate inverts address everywhere; the image ends at the last used address
            for (let b = 0; b < blocks; b++) for (const c of used) expect(locate(map, map.devices[0]!, address(s, b, c))).toMatchObject({ block: b, channel: c });
            expect(map.devices[0]!.words).toBe(Math.max(...seen) + 1);
          }
        },
      ),
      { numRuns: 300 },
    );
  });

  it("an image past 4 GiB is a problem", () => {
    const s = spec({ base: 2 ** 31, ...defaultAssignment(4, 4) });
    // 2^31 + 4 words of 2 bytes > 2^32 bytes
    expect(layoutProblems(buildDeviceMap(s, 1), 2, String).map((p) => p.pointer)).toEqual(["/address"]);
    expect(layoutProblems(buildDeviceMap(s, 1), 1, String)).toEqual([]);
  });

  it("changed addresses become ranges; a gap of padding only is bridged", () => {
    const s = spec({ beamStride: 8, ...defaultAssignment(4, 4) }); // channels at 0–3, padding 4–7 of each block
    const map = buildDeviceMap(s, 4);
    const d = map.devices[0]!;
    expect(addressRanges(map, d, [0, 1, 2, 3, 8, 9, 19, 27])).toEqual([[0, 9], [19, 19], [27, 27]]);
  });

  it("full-load time: words × (word bits + framing bits) / clock", () => {
    // derived: 36 words of 16 bits + 8 framing bits at 10 MHz = 864 clocks = 86.4 µs
    expect(loadSeconds(36, 16, 8, 10e6)).toBeCloseTo(86.4e-6, 15);
  });
});
