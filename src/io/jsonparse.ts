/**
 * A strict JSON reader (RFC 8259) for the scenario, stricter than JSON.parse where
 * JSON.parse is silent: a key given twice in one object is an error (JSON.parse keeps the
 * last one without a word), a number too large for a double (1e400) is an error (not
 * Infinity), and nesting deeper than MAX_JSON_DEPTH is an error (not a stack overflow
 * later). Every error carries the line and column, and the JSON pointer where known.
 */
import { D } from "../core/exact.js";
import { pointerPart } from "./json-diff.js";

export const MAX_JSON_DEPTH = 64;

/** A number whose text is not a whole number though its double is (2.0000000000000001, 1e-400). */
export interface RoundedNumber {
  pointer: string;
  text: string;
  value: number;
}

export class JsonError extends Error {
  constructor(
    message: string,
    readonly line: number,
    readonly column: number,
    readonly pointer?: string,
  ) {
    super(message);
  }
}

const NUMBER_RE = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;

/** `rounded`, when given, collects every RoundedNumber (the caller decides where a whole number was due). */
export function parseJsonStrict(text: string, rounded?: RoundedNumber[]): unknown {
  let i = 0;
  const fail = (message: string, at = i, pointer?: string): never => {
    const before = text.slice(0, at);
    const line = before.split("\n").length;
    throw new JsonError(message, line, at - before.lastIndexOf("\n"), pointer);
  };
  const ws = () => {
    for (;;) {
      const c = text.charCodeAt(i);
      if (c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09) i++;
      else return;
    }
  };
  const what = () => (i >= text.length ? "end of text" : JSON.stringify(text[i]));
  const str = (): string => {
    const start = i;
    i++; // opening quote
    let out = "";
    for (;;) {
      if (i >= text.length) fail("unterminated string", start);
      const c = text.charCodeAt(i);
      if (c === 0x22) {
        i++;
        return out;
      }
      if (c < 0x20) fail("control character in a string (escape it)");
      if (c === 0x5c) {
        const e = text[i + 1];
        const simple: Record<string, string> = { '"': '"', "\\": "\\", "/": "/", b: "\b", f: "\f", n: "\n", r: "\r", t: "\t" };
        if (e !== undefined && e in simple) {
          out += simple[e];
          i += 2;
        } else if (e === "u" && /^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
          out += String.fromCharCode(parseInt(text.slice(i + 2, i + 6), 16));
          i += 6;
        } else fail("bad escape in a string");
      } else {
        const j = text.indexOf('"', i);
        const k = text.indexOf("\\", i);
        let end = j < 0 ? text.length : j;
        if (k >= 0 && k < end) end = k;
        const chunk = text.slice(i, end);
        // eslint-disable-next-line no-control-regex
        const ctl = /[\u0000-\u001f]/.exec(chunk);
        if (ctl) {
          i += ctl.index;
          fail("control character in a string (escape it)");
        }
        out += chunk;
        i = end;
      }
    }
  };
  const value = (pointer: string, depth: number): unknown => {
    ws();
    const c = text[i];
    if (c === "{" || c === "[") {
      if (depth >= MAX_JSON_DEPTH) fail(`nested deeper than ${MAX_JSON_DEPTH} levels; expected a scenario document`, i, pointer);
      i++;
      ws();
      if (c === "[") {
        const arr: unknown[] = [];
        if (text[i] === "]") {
          i++;
          return arr;
        }
        for (;;) {
          arr.push(value(`${pointer}/${arr.length}`, depth + 1));
          ws();
          if (text[i] === ",") i++;
          else if (text[i] === "]") {
            i++;
            return arr;
          } else fail(`expected "," or "]" in an array, found ${what()}`);
        }
      }
      const obj: Record<string, unknown> = {};
      const seen = new Set<string>();
      if (text[i] === "}") {
        i++;
        return obj;
      }
      for (;;) {
        ws();
        if (text[i] !== '"') fail(`expected a key in quotes, found ${what()}`);
        const at = i;
        const key = str();
        const p = `${pointer}/${pointerPart(key)}`;
        if (seen.has(key)) fail(`key "${key}" is given twice in one object; expected each key once`, at, p);
        seen.add(key);
        ws();
        if (text[i] !== ":") fail(`expected ":" after a key, found ${what()}`);
        i++;
        const v = value(p, depth + 1);
        Object.defineProperty(obj, key, { value: v, enumerable: true, writable: true, configurable: true });
        ws();
        if (text[i] === ",") i++;
        else if (text[i] === "}") {
          i++;
          return obj;
        } else fail(`expected "," or "}" in an object, found ${what()}`);
      }
    }
    if (c === '"') return str();
    if (text.startsWith("true", i)) return (i += 4), true;
    if (text.startsWith("false", i)) return (i += 5), false;
    if (text.startsWith("null", i)) return (i += 4), null;
    NUMBER_RE.lastIndex = i;
    const m = NUMBER_RE.exec(text);
    if (m) {
      const at = i;
      i += m[0].length;
      const n = Number(m[0]);
      if (!Number.isFinite(n)) fail(`number ${m[0]} is too large (beyond ±1.8e308, the range of a double)`, at, pointer);
      if (rounded && Number.isInteger(n) && /[.eE]/.test(m[0]) && !new D(m[0]).isInteger()) rounded.push({ pointer, text: m[0], value: n });
      return n;
    }
    return fail(`unexpected ${what()}; expected a value`);
  };
  const v = value("", 0);
  ws();
  if (i < text.length) fail(`unexpected ${what()} after the document`);
  return v;
}
