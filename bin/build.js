#!/usr/bin/env node
// Bundles src/ and its JavaScript dependencies into dist/ with esbuild (ES modules, lazily loaded chunks) so
// that the command starts without transpiling TypeScript on every run. Run by `npm run build` and by npm's
// `prepare` step (so `npm ci` leaves a fresh build; there with --optional, so that a failed build only warns).
// bin/wakeplane.js uses dist/ only while it matches src/ (dist/build.json records the sources it was made from)
// and otherwise runs the sources through tsx.
import { mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { sourceStamp } from './stamp.js';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const dist = join(root, 'dist');
const tmp = join(root, `dist.tmp-${process.pid}`);
const stamp = sourceStamp(join(root, 'src'));

rmSync(tmp, { recursive: true, force: true });
mkdirSync(tmp, { recursive: true });
try {
  const { build } = await import('esbuild');
  await build({
    // the NetCDF output worker is a second entry: its thread loads dist/netcdfWorker.js (src/io/netcdfWrite.ts)
    entryPoints: { main: join(root, 'src', 'cli', 'main.ts'), netcdfWorker: join(root, 'src', 'io', 'netcdfWorker.mjs') },
    outdir: tmp,
    bundle: true,
    splitting: true, // the image stack, planner and simulator stay in chunks loaded only by the commands that use them
    format: 'esm',
    platform: 'node',
    target: 'node20',
    // JavaScript dependencies are bundled too (loading ~200 small files cost ~0.2 s at every start); the image
    // library has native parts and stays in node_modules, as do the browser driver used only by tests and the HDF5
    // library (4 MB of WebAssembly, loaded only for NetCDF files)
    external: ['sharp', 'playwright-core', 'h5wasm'],
    // bundled CommonJS dependencies call require() for Node's own modules
    banner: { js: "import { createRequire as __wakeplaneRequire } from 'node:module'; const require = __wakeplaneRequire(import.meta.url);" },
    sourcemap: 'linked', // node --enable-source-maps maps stack traces back to src/
    logLevel: 'warning',
  });
  writeFileSync(join(tmp, 'build.json'), JSON.stringify(stamp) + '\n');
  // swap in whole: a reader sees the old build or the new one, never half of one
  const old = join(root, `dist.old-${process.pid}`);
  try { renameSync(dist, old); } catch { /* no earlier build */ }
  renameSync(tmp, dist);
  rmSync(old, { recursive: true, force: true });
  console.log(`wakeplane: built dist/ from ${stamp.files} source files`);
} catch (e) {
  rmSync(tmp, { recursive: true, force: true });
  console.error(`wakeplane: build failed (${e instanceof Error ? e.message : e}); the command will run from src/ through tsx`);
  // --optional (npm's prepare step): an install must not fail for want of the quicker start
  if (!process.argv.includes('--optional')) process.exitCode = 1;
}
