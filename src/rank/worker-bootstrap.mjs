// Worker-thread entry of the ranking pool (src/rank/pool.ts). Worker threads do not inherit the
// TypeScript loader of the main thread, so this plain-JavaScript file registers tsx's ESM loader
// in the worker, then imports the TypeScript worker.
import { register } from 'tsx/esm/api';

register();
await import('./worker.ts');
