import { createNativeEngine } from '../../app/engine/native.ts';
import { engineSuite } from './suite.ts';

engineSuite('native', () => createNativeEngine({ threads: 2 }), { formats: ['parquet', 'csv', 'ndjson'], cancellable: true });
