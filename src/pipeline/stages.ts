/**
 * The stages that follow retrieval in a normal run, in order: wake analysis, images, report.
 */
import type { RunStage } from './run.ts';

export function defaultStages(): RunStage[] {
  return [];
}
