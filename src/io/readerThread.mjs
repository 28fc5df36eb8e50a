// Worker-thread entry of the threaded sample reader: loads the TypeScript sources through tsx, then the worker body.
import { register } from 'tsx/esm/api';

register();
await import('./readerWorker.ts');
