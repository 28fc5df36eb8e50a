/** Debian's python3 with the packages a reference check needs; undefined (and the reason) when absent. */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export function debianPython(modules: string[]): { python?: string; why: string } {
  const python = existsSync('/usr/bin/python3') ? '/usr/bin/python3' : undefined;
  if (!python) return { why: 'no /usr/bin/python3' };
  const r = spawnSync(python, ['-c', modules.map((m) => `import ${m}`).join('; ')], { encoding: 'utf8' });
  if (r.status !== 0) return { why: `python3 lacks ${modules.join(', ')} (Debian: apt-get install python3-netcdf4 python3-xarray; .ci/run installs them)` };
  return { python, why: '' };
}

export function hasCommand(cmd: string): boolean {
  return spawnSync('sh', ['-c', `command -v ${cmd}`]).status === 0;
}

/** What one job of pythonBatch printed, and its exit status. */
export interface PythonJobResult {
  status: number;
  stdout: string;
  stderr: string;
}

/**
 * Runs jobs (each the argv of `python3 SCRIPT ARGS` or `python3 -c CODE ARGS`) in one python3 process through
 * test/reference/run_batch.py, so heavy modules (xarray, pandas) are imported once for a whole test file.
 */
export function pythonBatch(python: string, jobs: Record<string, string[]>): Record<string, PythonJobResult> {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-pyjobs-'));
  const file = join(dir, 'jobs.json');
  writeFileSync(file, JSON.stringify(jobs));
  const r = spawnSync(python, ['test/reference/run_batch.py', file], { encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`run_batch.py failed: ${r.stderr}`);
  return JSON.parse(r.stdout) as Record<string, PythonJobResult>;
}
