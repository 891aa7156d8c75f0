import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { InputError } from "../../src/core/errors.js";
import { loadScenario } from "../../src/io/scenario.js";
import { baseScenario, tempDir, writeScenario } from "../helpers.js";

/** Every leaf path of an object, as key arrays. */
function paths(o: unknown, at: (string | number)[] = []): (string | number)[][] {
  if (o === null || typeof o !== "object") return [at];
  const out: (string | number)[][] = [at];
  for (const [k, v] of Object.entries(o)) out.push(...paths(v, [...at, Array.isArray(o) ? Number(k) : k]));
  return out;
}

function setAt(o: Record<string, unknown>, path: (string | number)[], value: unknown): Record<string, unknown> {
  const copy = structuredClone(o);
  if (!path.length) return value as Record<string, unknown>;
  let cur: Record<string | number, unknown> = copy;
  for (const k of path.slice(0, -1)) cur = cur[k] as Record<string | number, unknown>;
  cur[path[path.length - 1]!] = value;
  return copy;
}

describe("scenario loading never fails except with located input problems (property, fast-check)", () => {
  const base = baseScenario({ calibration: "cal.csv" });
  const all = paths(base);
  const dir = tempDir();
  const cal = "element,phase_offset_deg,gain_offset_db\n" + Array.from({ length: 8 }, (_, i) => `${i},${i * 10},0`).join("\n") + "\n";

  it("any value at any place of a valid scenario: a plan or an InputError naming the file", () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.constantFrom(...all), fc.oneof(fc.jsonValue(), fc.constantFrom("1e400", "-0", "NaN", "5 lambda", "0.0001 GHz", "1e12 GHz", 1e308, -1e-320, 0, -1, 4096, 1e9))), { minLength: 1, maxLength: 3 }), (edits) => {
        let doc = base;
        for (const [path, value] of edits) {
          try {
            doc = setAt(doc, path, value);
          } catch {
            /* the path no longer exists after an earlier edit */
          }
        }
        const s = writeScenario(doc, { "cal.csv": cal }, dir);
        try {
          const L = loadScenario(s);
          expect(L.plan.elements.count).toBeGreaterThan(0);
          for (const a of L.plan.amplitude) expect(a).toBeGreaterThan(0);
          for (const u of L.plan.beams.u) expect(Number.isFinite(u)).toBe(true);
        } catch (e) {
          if (!(e instanceof InputError)) throw e;
          expect(e.problems.length).toBeGreaterThan(0);
          for (const p of e.problems) expect(p.file).toBeTruthy();
        }
      }),
      { numRuns: 1500 },
    );
  });
});
