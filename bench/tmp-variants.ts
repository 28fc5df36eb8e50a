import { generateBench } from './generate.ts';
import { benchVariants } from './netcdf.ts';
const d = await generateBench(10_000_000, undefined, console.log);
const t = performance.now();
console.log(await benchVariants(d, console.log), ((performance.now() - t) / 1000).toFixed(1), 's');
