/** parquet-wasm's web build with its .wasm served by Vite as an asset URL (browser only), instantiated once. */
import init, { ParquetFile } from 'parquet-wasm/esm';
import wasmUrl from 'parquet-wasm/esm/parquet_wasm_bg.wasm?url';
import type { ParquetWasmModule } from './decoder.ts';

let ready: Promise<unknown> | null = null;

export async function browserParquetModule(): Promise<ParquetWasmModule> {
  ready ??= init({ module_or_path: wasmUrl });
  try {
    await ready;
  } catch (error) {
    ready = null;
    throw error;
  }
  return { ParquetFile };
}
