/**
 * The planner as the CLI calls it: plan a campaign and write its outputs under <runDir>/plan/.
 */
import type { Campaign } from '../campaign/types.ts';

export async function planAndWrite(c: Campaign, runDir: string, opts: { images: boolean }): Promise<{ summary: string }> {
  void c; void runDir; void opts;
  return { summary: 'planner: not wired yet' };
}
