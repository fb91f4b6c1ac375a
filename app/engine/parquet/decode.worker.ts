/// <reference lib="webworker" />
/**
 * The Parquet decode worker of standalone web mode: parquet-wasm runs here, off the page's thread
 * (decode-service.ts). It reads the File it was given by range and answers each row group as Arrow IPC
 * bytes, transferred to the page, which hands them on to DuckDB-Wasm's worker.
 */
import { browserParquetModule } from './browser-module.ts';
import { decodeService } from './decode-service.ts';

const handle = decodeService(browserParquetModule);
self.onmessage = (event: MessageEvent<unknown>) => {
  void handle(event.data, (message, transfer) => self.postMessage(message, transfer));
};
