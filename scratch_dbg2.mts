import { writeJunkCampaign } from './test/helpers/junkCampaign.ts';
import { loadCampaignFile } from './src/campaign/load.ts';
import { readHeads } from './src/qc/cnrLimits.ts';
import { cnrEvidence } from './src/qc/cnrEvidence.ts';
import { chooseCnrLimit } from './src/qc/cnrLimit.ts';
const { file } = writeJunkCampaign([
      { id: 'south', position: [480, -650, 100], cnr250_db: -8, junkBelow_db: -22, junkShare: 1, junkKind: 'uniform' },
      { id: 'north', position: [480, 650, 100], cnr250_db: -13, junkBelow_db: -29, junkShare: 0.7, junkKind: 'gauss' },
], { rowsPerWindow: Number(process.argv[2]), seed: 3 });
const c = loadCampaignFile(file);
const { cols } = await readHeads(c, 100000);
for (const k of [0, 1]) {
  const col = cols[k];
  const s = { length: col.n, time: col.time, azimuth: col.azimuth, elevation: col.elevation, range: col.range, radialVelocity: col.radialVelocity, cnr: col.cnr };
  const ev1 = cnrEvidence(s); const d1 = chooseCnrLimit(ev1);
  const ev2 = cnrEvidence(s, { ...ev1.binning, referenceMin_db: d1.min_db }); const d2 = chooseCnrLimit(ev2);
  console.log(k, 'pass1', d1.min_db, ev1.referenced, 'pass2', d2.min_db, ev2.referenced, JSON.stringify(ev1.binning));
  for (const [name, d] of [['p1', d1], ['p2', d2]] as const) console.log('  ', name, d.classes.filter(x => x.lo_db > -34 && x.lo_db < -15).map(x => `${x.lo_db}:${x.samples}:${(100*x.inconsistentShare).toFixed(0)}`).join(' '));
}
