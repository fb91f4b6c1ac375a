import type { CsvOptions, SourceFormat } from '../../app/engine/types.ts';
import type { LogInput } from './backend.ts';

export interface FileChoice {
  readonly format: SourceFormat;
  readonly csv?: CsvOptions;
}

const BY_EXTENSION: Record<string, FileChoice> = {
  csv: { format: 'csv', csv: { delimiter: ',', header: true } },
  tsv: { format: 'csv', csv: { delimiter: '\t', header: true } },
  tab: { format: 'csv', csv: { delimiter: '\t', header: true } },
  ndjson: { format: 'ndjson' },
  jsonl: { format: 'ndjson' },
  json: { format: 'ndjson' },
  parquet: { format: 'parquet' },
  pq: { format: 'parquet' },
};

export const ACCEPTED_EXTENSIONS = Object.keys(BY_EXTENSION).map((e) => `.${e}`);

function extensionOf(name: string): string {
  const dot = name.lastIndexOf('.');
  return dot < 0 ? '' : name.slice(dot + 1).toLowerCase();
}

/** One format for all parts of a log, or a sentence saying why not. */
export function chooseFormat(names: readonly string[]): FileChoice | { error: string } {
  if (names.length === 0) return { error: 'Choose at least one file.' };
  const choices = names.map((n) => ({ name: n, choice: BY_EXTENSION[extensionOf(n)] }));
  const unknown = choices.filter((c) => !c.choice).map((c) => c.name);
  if (unknown.length > 0) {
    return { error: `Counterweight reads ${ACCEPTED_EXTENSIONS.join(', ')} files; it cannot tell the format of ${unknown.join(', ')}.` };
  }
  const first = choices[0]?.choice as FileChoice;
  const mixed = choices.filter((c) => c.choice?.format !== first.format || c.choice?.csv?.delimiter !== first.csv?.delimiter);
  if (mixed.length > 0) {
    return { error: `All parts of a log must share one format; ${mixed.map((c) => c.name).join(', ')} differ from ${names[0]}.` };
  }
  return first;
}

/** The names of a log's parts, and the one format they share; a mix of formats, or none known, is an error. */
export function formatOfInput(input: LogInput): { names: string[]; choice: FileChoice } {
  const names = input.kind === 'paths' ? [...input.paths] : input.files.map((f) => f.name);
  const choice = chooseFormat(names);
  if ('error' in choice) throw new Error(choice.error);
  return { names, choice };
}
