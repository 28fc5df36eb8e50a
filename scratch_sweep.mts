import { junkSamples } from './test/helpers/junkSamples.ts';
import { estimateCnrLimit } from './src/qc/cnrLimit.ts';
let bad = 0, n = 0;
const dev: number[] = [];
for (const level of [-17, -20, -23, -26, -29, -32]) for (const kind of ['uniform', 'gauss'] as const) for (const share of [1, 0.6, 0.3]) for (const spread of [1.5, 4]) for (const seed of [1, 2]) {
  const s = junkSamples({ junkBelow_db: level, junkKind: kind, junkShare: share, rows: 30000, seed: seed * 1000 + level, cnr250_db: level < -28 ? -14 : -8, cnrSpread_db: spread, turbulence_ms: seed === 2 ? 0.7 : 0.4 });
  const { decision: d } = estimateCnrLimit(s);
  n++; dev.push(d.min_db - level);
  if (d.min_db < level || d.min_db > level + 1) { bad++; console.log('off', level, kind, share, spread, seed, d.min_db, d.status); }
}
console.log(`${bad} of ${n} off; deviations histogram`, JSON.stringify(Object.entries(dev.reduce((m: any, x) => (m[x] = (m[x] ?? 0) + 1, m), {}))));
