// Starts the NetCDF reader thread from the TypeScript sources (no bundle in dist/): registers tsx's loader in this
// thread, then loads netcdfReadWorker.ts. The bundle runs dist/netcdfReader.js directly (netcdfThread.ts).
const { register } = await import('tsx/esm/api');
register();
await import('./netcdfReadWorker.ts');
