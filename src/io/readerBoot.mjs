// Starts the sample reader thread from the TypeScript sources (no bundle in dist/): registers tsx's loader in this
// thread, then loads readerWorker.ts. The bundle runs dist/sampleReader.js directly (readerThread.ts).
const { register } = await import('tsx/esm/api');
register();
await import('./readerWorker.ts');
