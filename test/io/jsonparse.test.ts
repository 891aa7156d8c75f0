import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { JsonError, parseJsonStrict } from "../../src/io/jsonparse.js";

describe("strict JSON reader", () => {
  it("reads every JSON document without a repeated key exactly as JSON.parse does (reference library: Node's JSON.parse, RFC 8259)", () => {
    fc.assert(
      fc.property(fc.jsonValue({ maxDepth: 6 }), fc.boolean(), (v, pretty) => {
        const text = JSON.stringify(v, null, pretty ? 2 : undefined);
        expect(parseJsonStrict(text)).toEqual(JSON.parse(text));
      }),
      { numRuns: 300 },
    );
  });
  it("refuses what JSON.parse also refuses", () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 20 }), (t) => {
        let ok = true;
        try {
          JSON.parse(t);
        } catch {
          ok = false;
        }
        if (!ok) expect(() => parseJsonStrict(t)).toThrow(JsonError);
      }),
      { numRuns: 500 },
    );
  });
  it("names a repeated key, an overflowing number and deep nesting, with line and pointer", () => {
    const dup = (() => { try { parseJsonStrict('{\n "a": {"b": 1,\n "b": 2}}'); } catch (e) { return e as JsonError; } return null; })();
    expect(dup).toMatchObject({ line: 3, pointer: "/a/b" });
    expect(() => parseJsonStrict('{"x": [1e400]}')).toThrow(/number 1e400 is too large/);
    expect(() => parseJsonStrict("[".repeat(65) + "]".repeat(65))).toThrow(/nested deeper than 64/);
    expect(parseJsonStrict("[".repeat(64) + "]".repeat(64))).toBeDefined();
    expect(parseJsonStrict('{"__proto__": {"x": 1}}')).toEqual(JSON.parse('{"__proto__": {"x": 1}}'));
  });
});
