import { restoreCell } from './csv-cell.ts';

/**
 * A small RFC 4180 CSV reader for target tables (quoted fields, doubled quotes, CRLF). A cell written
 * neutralised against spreadsheet formulas ('=..., '+..., csv-cell.ts) reads back as it was.
 */
export function parseCsv(text: string): { header: string[]; rows: string[][] } {
  const records: string[][] = [];
  let field = '';
  let record: string[] = [];
  let quoted = false;
  let i = 0;
  const src = text.replace(/^\uFEFF/, '');
  while (i < src.length) {
    const ch = src[i] as string;
    if (quoted) {
      if (ch === '"') {
        if (src[i + 1] === '"') {
          field += '"';
          i += 2;
          continue;
        }
        quoted = false;
      } else field += ch;
      i++;
      continue;
    }
    if (ch === '"' && field === '') quoted = true;
    else if (ch === ',') {
      record.push(field);
      field = '';
    } else if (ch === '\n' || ch === '\r') {
      record.push(field);
      field = '';
      if (record.some((f) => f !== '') || record.length > 1) records.push(record);
      record = [];
      if (ch === '\r' && src[i + 1] === '\n') i++;
    } else field += ch;
    i++;
  }
  if (field !== '' || record.length > 0) {
    record.push(field);
    records.push(record);
  }
  const [header = [], ...rows] = records.map((r) => r.map(restoreCell));
  return { header: header.map((h) => h.trim()), rows };
}
