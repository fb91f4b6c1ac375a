import path from 'node:path';

export interface DesktopPaths {
  preload: string;
  engineHostEntry: string;
  rendererRoot: string;
  demoLog: string;
}

/** Where the bundles sit relative to dist/electron/ (the folder of main.cjs), in a checkout or a package. */
export function desktopPaths(bundleDir: string): DesktopPaths {
  const root = path.resolve(bundleDir, '..', '..');
  return {
    preload: path.join(bundleDir, 'preload.cjs'),
    engineHostEntry: path.join(bundleDir, 'engine-host.cjs'),
    rendererRoot: path.join(root, 'dist', 'renderer'),
    demoLog: path.join(root, 'sample-data', 'maple-row-demo.parquet'),
  };
}
