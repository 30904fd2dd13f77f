// Entry of the worker thread that reads a later part of a large CSV file, run from the TypeScript
// sources when esbuild cannot bundle it (parallel.ts). Worker threads
// do not inherit the main thread's TypeScript loader, so this plain module registers it first.
import { register } from 'tsx/esm/api';

register();
await import('./partWorker.ts');
