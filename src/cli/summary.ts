/**
 * The short text a run prints: where the results are, the sample accounting per instrument, windows and fields,
 * assumptions and warnings.
 */
import { relative } from 'node:path';
import type { RunResult } from '../pipeline/run.ts';
import { REJECT_REASONS, type SampleAccount } from '../qc/reasons.ts';

function pct(n: number, d: number): string {
  return d > 0 ? `${((100 * n) / d).toFixed(1)}%` : '-';
}

export function accountingLines(per: Record<string, SampleAccount>, total: SampleAccount): string[] {
  const used = REJECT_REASONS.filter((r) => total.rejected[r] > 0);
  const head = ['instrument', 'read', 'accepted', ...used];
  const rows = [...Object.entries(per), ['all', total] as [string, SampleAccount]].map(([id, a]) => [
    id, a.read.toLocaleString('en'), `${a.accepted.toLocaleString('en')} (${pct(a.accepted, a.read)})`, ...used.map((r) => a.rejected[r].toLocaleString('en')),
  ]);
  const widths = head.map((h, k) => Math.max(h.length, ...rows.map((r) => r[k].length)));
  const fmt = (r: string[]) => '  ' + r.map((v, k) => (k === 0 ? v.padEnd(widths[k]) : v.padStart(widths[k]))).join('  ');
  return [fmt(head), ...rows.map(fmt)];
}

export function formatRunSummary(res: RunResult): string {
  const m = res.manifest;
  const where = relative(process.cwd(), res.runDir) || res.runDir;
  const fields = m.outputs.filter((o) => o.kind === 'field-table').length;
  const images = m.outputs.filter((o) => o.kind === 'image').length;
  const lines = [
    `wakeplane ${m.tool.version} — campaign ${m.campaign.name}`,
    `results in ${where}/  (${fields} field table${fields === 1 ? '' : 's'}, ${images} image${images === 1 ? '' : 's'}${m.outputs.some((o) => o.kind === 'report') ? ', report.html' : ''})`,
    `${m.windows.length} window${m.windows.length === 1 ? '' : 's'}; ${m.samples.total.read.toLocaleString('en')} samples read in ${m.timings_s.total?.toFixed(1)} s`,
    'sample accounting (read = accepted + rejected by reason):',
    ...accountingLines(m.samples.perInstrument, m.samples.total),
  ];
  if (!m.samples.balanced) lines.push('  WARNING: the accounting does not balance');
  if (m.cnrLimits) {
    lines.push(`CNR limits (${m.cnrLimits.mode === 'auto' ? 'estimated from the data: qc.cnr_db.min auto' : m.cnrLimits.mode === 'fixed' ? 'fixed' : 'estimated where auto, else fixed'}):`);
    for (const [id, l] of Object.entries(m.cnrLimits.perInstrument)) lines.push(`  ${id}: ${l.min_db.toFixed(1)} dB  ${l.note}`);
  }
  for (const a of m.assumptions.slice(0, 3)) lines.push(`assumption: ${a}`);
  if (m.assumptions.length > 3) lines.push(`  (+${m.assumptions.length - 3} more assumptions in manifest.json)`);
  for (const w of m.warnings) lines.push(`warning: ${w}`);
  for (const n of res.notices) lines.push(`note: ${n}`);
  return lines.join('\n');
}
