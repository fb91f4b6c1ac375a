// `npm run web -- [--port N] [--host] [--no-build]`: the renderer (and optionally the native engine) on 127.0.0.1.
import { register } from 'tsx/esm/api';

register();
const { main } = await import('./web/main.ts');
await main(process.argv.slice(2));
