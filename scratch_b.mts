import { loadCampaignFile } from './src/campaign/load.ts';
import { readHeads, resolveCnrLimits } from './src/qc/cnrLimits.ts';
const c = loadCampaignFile('/tmp/autoqc-bench/rows-10000000/campaign.yaml');
for (let k = 0; k < 2; k++) {
let t = performance.now(); let cpu = process.cpuUsage();
await readHeads(c, 100000);
console.log('read', (performance.now() - t).toFixed(0), 'cpu', (process.cpuUsage(cpu).user / 1000).toFixed(0));
t = performance.now(); cpu = process.cpuUsage();
const r = await resolveCnrLimits(c);
console.log('all', (performance.now() - t).toFixed(0), 'cpu', (process.cpuUsage(cpu).user / 1000).toFixed(0));
for (const [id, l] of Object.entries(r.perInstrument)) console.log(id, l.min_db, l.status, l.referenced, JSON.stringify(l.binning));
}
