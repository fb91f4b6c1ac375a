/** A command that writes one document (a comparison, a history) as JSON and as a self-contained HTML page. */
import type { FlagSpec } from './args.ts';
import { writeFile } from './commands/audit.ts';
import type { CliIo } from './io.ts';

/** `--json FILE|-` and `--html FILE` for the document `noun` of contract `contract`. */
export function documentFlags(noun: string, contract: string): { json: FlagSpec; html: FlagSpec } {
  return {
    json: { kind: 'string', value: 'FILE|-', help: `write the ${noun} (${contract}) to FILE, or to stdout with -` },
    html: { kind: 'string', value: 'FILE', help: `write the self-contained HTML ${noun}` },
  };
}

/** Writes the JSON (to stdout for `-`) and the HTML page where asked; the page's renderer loads only then. */
export async function writeDocument(io: CliIo, out: { json?: string | undefined; html?: string | undefined }, json: () => string, page: () => Promise<string>): Promise<void> {
  if (out.json === '-') io.stdout.write(json());
  else if (out.json) writeFile(out.json, json(), io.cwd);
  if (out.html) writeFile(out.html, await page(), io.cwd);
}
