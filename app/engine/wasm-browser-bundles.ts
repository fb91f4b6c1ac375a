/** DuckDB-Wasm's exception-handling build, served by Vite as asset URLs (browser only). */
import ehWasm from '@duckdb/duckdb-wasm/dist/duckdb-eh.wasm?url';
import ehWorker from '@duckdb/duckdb-wasm/dist/duckdb-browser-eh.worker.js?url';
import type { WasmBrowserBundle } from './wasm-browser.ts';

export const defaultBundle: WasmBrowserBundle = { mainModule: ehWasm, mainWorker: ehWorker };
