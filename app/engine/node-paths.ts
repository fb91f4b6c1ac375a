import { statSync } from 'node:fs';

/** Which of the given paths are folders (of part files); missing paths are not, DuckDB reports them. */
export function foldersAmong(paths: readonly string[]): string[] {
  return paths.filter((path) => {
    try {
      return statSync(path).isDirectory();
    } catch {
      return false;
    }
  });
}
