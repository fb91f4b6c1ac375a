#!/usr/bin/env node
// The command runs from TypeScript sources: tsx's ESM loader is registered before the first .ts import.
import { register } from 'tsx/esm/api';

register();
const { runProcess } = await import('../app/cli/main.ts');
await runProcess();
