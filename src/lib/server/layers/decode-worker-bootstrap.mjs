// Loads the TypeScript worker entry through tsx inside the worker thread.
import { register } from 'tsx/esm/api';
register();
await import('./decode-worker-entry.ts');
