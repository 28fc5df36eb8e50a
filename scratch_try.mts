import { junkSamples } from './test/helpers/junkSamples.ts';
import { estimateCnrLimit } from './src/qc/cnrLimit.ts';
import { cnrEvidence } from './src/qc/cnrEvidence.ts';
const s = junkSamples({ junkBelow_db: -25, rows: 200000 });
for (let r = 0; r < 4; r++) {
  let c0 = process.cpuUsage();
  const ev = cnrEvidence(s);
  const c1 = process.cpuUsage(c0);
  const { decision: d, passes } = estimateCnrLimit(s);
  const c2 = process.cpuUsage(c0);
  console.log(d.min_db, passes, 'pass1 cpu ms', (c1.user/1000).toFixed(0), 'both', ((c2.user - c1.user)/1000).toFixed(0));
}
