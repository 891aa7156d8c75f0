/**
 * JSON Schema validation (ajv, draft 2020-12) with messages an engineer can act on:
 * the JSON pointer, what was expected, and a did-you-mean for misspelt keys.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import type { ErrorObject, ValidateFunction } from "ajv/dist/2020.js";
import type { Problem } from "../core/errors.js";
import { didYouMean } from "../core/spelling.js";

const schemaUrl = new URL("../../schemas/scenario.schema.json", import.meta.url);

let validator: ValidateFunction | null = null;
function scenarioValidator(): ValidateFunction {
  if (!validator) {
    try {
      // precompiled by scripts/compile-schema.mjs at build time (dist only: dist/io/, found
      // the same way from the command's bundle in dist/cli-bundle/)
      validator = createRequire(import.meta.url)("../io/scenario-validate.cjs") as ValidateFunction;
      return validator;
    } catch {
      /* running from source: compile below */
    }
    // ajv itself is loaded only here: the built command never imports it
    const { Ajv2020 } = createRequire(import.meta.url)("ajv/dist/2020.js") as typeof import("ajv/dist/2020.js");
    const ajv = new Ajv2020({ allErrors: true, strict: true, allowUnionTypes: true, discriminator: true, verbose: true });
    validator = ajv.compile(JSON.parse(readFileSync(schemaUrl, "utf8")) as object);
  }
  return validator;
}

function describe(e: ErrorObject): string {
  const p = e.params as Record<string, unknown>;
  const got = e.data === undefined ? "" : `, got ${JSON.stringify(e.data)?.slice(0, 60)}`;
  switch (e.keyword) {
    case "required":
      return `missing required key "${String(p.missingProperty)}"`;
    case "additionalProperties": {
      const key = String(p.additionalProperty);
      const props = Object.keys(((e.parentSchema as { properties?: object } | undefined)?.properties ?? {}) as object);
      const hint = didYouMean(key, props);
      return `unknown key "${key}"${hint ? `; did you mean "${hint}"?` : props.length ? `; expected one of ${props.map((s) => `"${s}"`).join(", ")}` : ""}`;
    }
    case "type":
      return `expected ${String(p.type).replace(",", " or ")}${got}`;
    case "enum":
      return `expected one of ${(p.allowedValues as unknown[]).map((v) => JSON.stringify(v)).join(", ")}${got}`;
    case "const":
      return `expected ${JSON.stringify(p.allowedValue)}${got}`;
    case "minimum":
    case "maximum":
    case "exclusiveMinimum":
    case "exclusiveMaximum":
      return `expected a number ${String(p.comparison)} ${String(p.limit)}${got}`;
    case "minItems":
      return `expected at least ${String(p.limit)} item(s)`;
    case "maxItems":
      return `expected at most ${String(p.limit)} item(s)`;
    case "minLength":
      return `expected a non-empty string`;
    case "maxLength":
      return `expected at most ${String(p.limit)} characters`;
    case "uniqueItems":
      return `items ${String(p.j)} and ${String(p.i)} are the same; expected no duplicates`;
    case "pattern":
      return `expected a lower-case name (letters, digits, _)${got}`;
    case "discriminator":
      return p.error === "mapping" ? `unknown kind ${JSON.stringify(p.tagValue)}${kindHint(e)}` : `missing "kind"`;
    case "oneOf":
      return `expected exactly one of the allowed forms${got}`;
    default:
      return e.message ?? e.keyword;
  }
}

function kindHint(e: ErrorObject): string {
  const alts = ((e.schema as { propertyName: string } | undefined) && (e.parentSchema as { oneOf?: { properties: { kind: { const: string } } }[] }).oneOf) ?? [];
  const kinds = alts.map((a) => a.properties.kind.const);
  const hint = didYouMean(String((e.params as { tagValue?: unknown }).tagValue), kinds);
  return hint ? `; did you mean "${hint}"?` : `; expected one of ${kinds.map((k) => `"${k}"`).join(", ")}`;
}

export function validateScenarioJson(doc: unknown, file: string): Problem[] {
  const v = scenarioValidator();
  if (v(doc)) return [];
  const errors = v.errors ?? [];
  // A failed oneOf also reports each branch's errors; keep the branch errors (more precise)
  // and drop the bare oneOf line when something more specific was said at or below it.
  const out: Problem[] = [];
  const seen = new Set<string>();
  for (const e of errors) {
    if (e.keyword === "oneOf" && errors.some((o) => o !== e && o.instancePath.startsWith(e.instancePath) && o.keyword !== "oneOf" && o.keyword !== "type")) continue;
    if (e.keyword === "type" && errors.some((o) => o.keyword === "oneOf" && o.instancePath === e.instancePath)) continue;
    const pointer = e.keyword === "additionalProperties" || e.keyword === "required" ? e.instancePath : e.instancePath;
    const msg = describe(e);
    const key = `${pointer}|${msg}`;
    if (seen.has(key)) continue;
    seen.add(key);
    out.push({ file, pointer, message: msg });
  }
  return out;
}
