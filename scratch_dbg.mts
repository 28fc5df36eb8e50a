import { writeJunkCampaign } from './test/helpers/junkCampaign.ts';
import { loadCampaignFile } from './src/campaign/load.ts';
import { resolveCnrLimits } from './src/qc/cnrLimits.ts';
for (const rows of [12000, 14000, 16000]) {
const { file } = writeJunkCampaign([
      { id: 'south', position: [480, -650, 100], cnr250_db: -8, junkBelow_db: -22, junkShare: 1, junkKind: 'uniform' },
      { id: 'north', position: [480, 650, 100], cnr250_db: -13, junkBelow_db: -29, junkShare: 0.7, junkKind: 'gauss' },
], { rowsPerWindow: rows, seed: 3 });
const r = await resolveCnrLimits(loadCampaignFile(file));
for (const [id, l] of Object.entries(r.perInstrument)) { console.log(rows, id, l.min_db, l.passes, JSON.stringify(l.binning)); if (rows===14000) for (const c of l.classes!.slice(0, 10)) console.log('   ', c.lo_db, c.hi_db, c.samples, c.inconsistentShare.toFixed(3), c.junkShare.toFixed(3)); }
}
