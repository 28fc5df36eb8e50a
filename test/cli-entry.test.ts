/**
 * The command's two ways of starting (bin/wakeplane.js): the bundled build in dist/ when it matches src/, and the
 * sources through tsx otherwise. Both must print the same thing. Without a fresh build (no `npm run build` since
 * the last edit) both runs take the source path and the comparison still holds; the test says which it compared.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
// @ts-expect-error plain JavaScript helper of the entry point, without type declarations
import { sourceStamp } from '../bin/stamp.js';

const ROOT = join(import.meta.dirname, '..');
// `check` exits 1 while the demo's data have not been simulated yet (a fresh clone): compare whatever it says
const run = (env: Record<string, string>) => {
  const r = spawnSync(process.execPath, ['bin/wakeplane.js', 'check', 'scenarios/quillmoor/campaign.yaml'], {
    cwd: ROOT,
    env: { ...process.env, ...env },
    encoding: 'utf8',
  });
  return `${r.status}\n${r.stdout}\n${r.stderr}`;
};

describe('command entry point', () => {
  it('prints the same from the build and from the sources', () => {
    const stampFile = join(ROOT, 'dist', 'build.json');
    const fresh = existsSync(stampFile) && JSON.stringify(JSON.parse(readFileSync(stampFile, 'utf8'))) === JSON.stringify(sourceStamp(join(ROOT, 'src')));
    console.info(`entry point compared: ${fresh ? 'dist/ build vs sources' : 'no fresh build, sources both times'}`);
    const built = run({});
    const source = run({ WAKEPLANE_FROM_SOURCE: '1' });
    expect(source).toMatch(/^[01]\ncampaign quillmoor-demo: /);
    expect(built).toBe(source); // exact: same code, same input
  }, 30_000);
});
