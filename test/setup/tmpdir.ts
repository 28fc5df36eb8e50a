/**
 * Every test file gets a temporary folder of its own as the system's temporary directory (TMPDIR, which os.tmpdir()
 * and the processes a test starts read), removed whole after the file: the tests' own folders (mkdtempSync under
 * tmpdir()) and whatever the code under test leaves there. Before this, each `npm test` left a few hundred folders
 * (several GB) in the machine's temporary directory.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll } from 'vitest';

// The machine's own temporary directory, remembered across files should a worker process run more than one.
process.env.WAKEPLANE_TEST_TMP_BASE ??= tmpdir();
const own = mkdtempSync(join(process.env.WAKEPLANE_TEST_TMP_BASE, 'wakeplane-vitest-'));
process.env.TMPDIR = own;

afterAll(() => {
  rmSync(own, { recursive: true, force: true, maxRetries: 3 });
});
