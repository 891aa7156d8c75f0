// Build step (npm run build / prepare): compile schemas/scenario.schema.json into a
// standalone ajv validator (dist/io/scenario-validate.cjs), so the command does not
// compile the schema at every start (~70 ms). src/io/schema.ts falls back to compiling
// at run time when the file is absent (tests run from source).
import { readFileSync, writeFileSync, mkdirSync } from "node:fs";
import { Ajv2020 } from "ajv/dist/2020.js";
import standaloneCode from "ajv/dist/standalone/index.js";

const schema = JSON.parse(readFileSync(new URL("../schemas/scenario.schema.json", import.meta.url), "utf8"));
const ajv = new Ajv2020({ allErrors: true, strict: true, allowUnionTypes: true, discriminator: true, verbose: true, code: { source: true } });
const validate = ajv.compile(schema);
mkdirSync(new URL("../dist/io/", import.meta.url), { recursive: true });
writeFileSync(new URL("../dist/io/scenario-validate.cjs", import.meta.url), standaloneCode.default(ajv, validate));
