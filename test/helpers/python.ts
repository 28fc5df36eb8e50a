/** Debian's python3 with the packages a reference check needs; undefined (and the reason) when absent. */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

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
