/**
 * The NetCDF-4 variants of the benchmark campaign (made once beside the CSV files, under netcdf/): every CSV file
 * converted to NetCDF-4 (rays x 40 gates, chunks of 1024 rays, deflate level 1; the reader's malformed rows become
 * missing values), a campaign reading them, and a CSV campaign that writes no NetCDF outputs (the cost of writing
 * them is the difference between the two CSV runs).
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { parse, stringify } from 'yaml';
import { csvToNetcdf } from '../src/sim/netcdfSamples.ts';
import type { BenchData } from './generate.ts';

export interface BenchVariants {
  netcdfCampaign: string;
  noNetcdfOutputCampaign: string;
  /** The CSV campaign with a fixed CNR limit (-35 dB, what the estimate gives on these data): no pre-pass. */
  fixedCnrCampaign: string;
  /** The CSV campaign with the uncertainty budget off (uncertainty.budget: false), and the same with it on. */
  noBudgetCampaign: string;
  budgetCampaign: string;
  netcdfBytes: number;
}

export async function benchVariants(d: BenchData, log: (s: string) => void): Promise<BenchVariants> {
  const doc = parse(readFileSync(d.campaign, 'utf8')) as { name: string; instruments: { id: string; files: string[] }[]; output: Record<string, unknown> };
  const dir = join(d.dir, 'netcdf');
  mkdirSync(dir, { recursive: true });
  let bytes = 0;
  for (const ins of doc.instruments) {
    ins.files = await Promise.all(ins.files.map(async (f) => {
      const nc = join(dir, basename(f).replace(/\.csv$/, '.nc'));
      if (!existsSync(nc)) {
        log(`  converting ${f} to NetCDF-4 (once)`);
        await csvToNetcdf(join(d.dir, f), nc, { id: ins.id }, { chunkRays: 1024, deflate: 1 });
      }
      bytes += readFileSync(nc).byteLength;
      return join('netcdf', basename(nc));
    }));
  }
  const netcdfCampaign = join(d.dir, 'campaign-netcdf.yaml');
  writeFileSync(netcdfCampaign, stringify({ ...doc, name: `${doc.name}-netcdf` }));
  const csvDoc = parse(readFileSync(d.campaign, 'utf8')) as typeof doc;
  const noNetcdfOutputCampaign = join(d.dir, 'campaign-no-netcdf-output.yaml');
  writeFileSync(noNetcdfOutputCampaign, stringify({ ...csvDoc, name: `${doc.name}-csv-only`, output: { ...csvDoc.output, netcdf: false } }));
  const fixedCnrCampaign = join(d.dir, 'campaign-fixed-cnr.yaml');
  const qc = (csvDoc as { qc?: Record<string, unknown> }).qc ?? {};
  writeFileSync(fixedCnrCampaign, stringify({ ...csvDoc, name: `${doc.name}-fixed-cnr`, qc: { ...qc, cnr_db: { ...((qc.cnr_db as object) ?? {}), min: -35 } } }));
  const noBudgetCampaign = join(d.dir, 'campaign-no-budget.yaml');
  writeFileSync(noBudgetCampaign, stringify({ ...csvDoc, name: `${doc.name}-no-budget`, uncertainty: { budget: false } }));
  const budgetCampaign = join(d.dir, 'campaign-budget.yaml');
  writeFileSync(budgetCampaign, stringify({ ...csvDoc, name: `${doc.name}-budget`, uncertainty: { budget: true } }));
  return { netcdfCampaign, noNetcdfOutputCampaign, fixedCnrCampaign, noBudgetCampaign, budgetCampaign, netcdfBytes: bytes };
}
