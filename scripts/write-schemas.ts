/** `npm run schemas`: writes the JSON Schema files generated from the zod contracts in app/core/model/. */
import { writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { GENERATED_SCHEMAS, schemaText } from '../app/core/model/json-schema.ts';

for (const { file, schema } of GENERATED_SCHEMAS) {
  const target = fileURLToPath(new URL(`../app/core/model/${file}`, import.meta.url));
  writeFileSync(target, schemaText(schema()));
  process.stdout.write(`wrote ${target}\n`);
}
