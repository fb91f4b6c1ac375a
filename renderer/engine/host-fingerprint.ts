import type { InputFile } from '../../app/core/model/report.ts';
import { literal } from '../../app/core/sql/quote.ts';
import { rowObjects, type RunQuery } from '../../app/core/table.ts';

/** Size, time and SHA-256 of each file, computed by the engine that can read the paths (read_blob is core DuckDB). */
export function fingerprintSql(paths: readonly string[]): string {
  return `SELECT filename, size::DOUBLE AS bytes, sha256(content) AS sha256, strftime(last_modified, '%Y-%m-%dT%H:%M:%SZ') AS modified\nFROM read_blob([${paths.map(literal).join(', ')}])\nORDER BY filename`;
}

export async function fingerprintPaths(run: RunQuery, paths: readonly string[]): Promise<InputFile[]> {
  return rowObjects(await run(fingerprintSql(paths))).map((r) => ({
    path: String(r.filename),
    bytes: Number(r.bytes),
    sha256: String(r.sha256),
    ...(typeof r.modified === 'string' ? { modified: r.modified } : {}),
  }));
}
