import { junkSamples } from './test/helpers/junkSamples.ts';
import { cnrEvidence } from './src/qc/cnrEvidence.ts';
import { chooseCnrLimit } from './src/qc/cnrLimit.ts';
for (const [level, kind, share, span] of [[-22, 'gauss', 1, 20], [-31, 'uniform', 1, 20], [-24, 'gauss', 1, 6]] as const) {
  const s = junkSamples({ junkBelow_db: level, junkKind: kind, junkShare: share, rows: 40000, seed: 100 - level, cnr250_db: level < -29 ? -12 : -8, junkSpan_ms: span });
  const ev1 = cnrEvidence(s); const d1 = chooseCnrLimit(ev1);
  const ev2 = cnrEvidence(s, { ...ev1.binning, referenceMin_db: d1.min_db }); const d2 = chooseCnrLimit(ev2);
  console.log(level, kind, 'pass1', d1.min_db, 'pass2', d2.min_db, 'q', d2.junkInconsistentShare.toFixed(2), 'p0', d2.referenceShare.toFixed(3), JSON.stringify(ev1.binning), ev1.scatter_ms.toFixed(2));
  for (const [name, d] of [['p1', d1], ['p2', d2]] as const) console.log('  ', name, d.classes.filter(x => x.lo_db > level - 6 && x.lo_db < level + 6).map(x => `${x.lo_db}:${x.samples}:${(100*x.inconsistentShare).toFixed(0)}`).join(' '));
}
