#!/usr/bin/env node
// Bundles src/ and its JavaScript dependencies into dist/ with esbuild (ES modules, lazily loaded chunks) so
// that the command starts without transpiling TypeScript on every run. Run by `npm run build` and by npm's
// `prepare` step (so `npm ci` leaves a fresh build; there with --optional, so that a failed build only warns).
// bin/wakeplane.js uses dist/ only while it matches src/ (dist/build.json records the sources it was made from)
// and otherwise runs the sources through tsx.
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { sourceStamp } from './stamp.js';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');

/**
 * The library's type declarations (package.json `types`): tsc emits .d.ts files for src/ (tsconfig.types.json),
 * whose relative imports are rewritten from .ts to .js as a consumer resolves them. Skipped with a note where
 * TypeScript is not installed (an install without dev dependencies); the bundle works without them.
 */
function emitTypes(out) {
  let tsc;
  try {
    tsc = createRequire(import.meta.url).resolve('typescript/bin/tsc');
  } catch {
    console.error('wakeplane: TypeScript not installed, no type declarations built');
    return;
  }
  const r = spawnSync(process.execPath, [tsc, '-p', join(root, 'tsconfig.types.json'), '--outDir', out], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`type declarations: ${(r.stdout + r.stderr).trim().split('\n')[0]}`);
  const walk = (d) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name.endsWith('.d.ts')) writeFileSync(p, readFileSync(p, 'utf8').replace(/(from\s+|import\()(['"])(\.{1,2}\/[^'"]+)\.ts\2/g, '$1$2$3.js$2'));
    }
  };
  walk(out);
  copyFileSync(join(root, 'src', 'io', 'netcdfCore.d.mts'), join(out, 'io', 'netcdfCore.d.mts'));
}
const dist = join(root, 'dist');
const tmp = join(root, `dist.tmp-${process.pid}`);
const stamp = sourceStamp(join(root, 'src'));

rmSync(tmp, { recursive: true, force: true });
mkdirSync(tmp, { recursive: true });
try {
  const { build } = await import('esbuild');
  await build({
    // index: the library (package.json exports); netcdfWorker: the NetCDF output thread, which loads
    // dist/netcdfWorker.js (src/io/netcdfWrite.ts); sampleReader: the sample reader thread (src/io/readerThread.ts);
    // early: what bin/wakeplane.js starts before loading main (src/cli/early.ts)
    entryPoints: {
      main: join(root, 'src', 'cli', 'main.ts'), index: join(root, 'src', 'index.ts'), netcdfWorker: join(root, 'src', 'io', 'netcdfWorker.mjs'),
      sampleReader: join(root, 'src', 'io', 'readerWorker.ts'), early: join(root, 'src', 'cli', 'early.ts'),
    },
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
  emitTypes(join(tmp, 'types'));
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
