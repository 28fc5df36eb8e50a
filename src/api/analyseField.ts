/**
 * The wake analysis of one retrieved field (one plane, one window) as a library call: inflow, deficit, 2-D Gaussian
 * fit, disk and centroid centres, rotor-equivalent speed, momentum deficit, with the campaign's series (inflow
 * reference, turbine yaw) loaded from its files.
 */
import type { Campaign } from '../campaign/types.ts';
import { loadWakeInputs } from '../pipeline/stages.ts';
import type { FieldResult } from '../retrieval/types.ts';
import { planeWindowContext, type WakeInputs } from '../wake/analyse.ts';
import { analysePlaneWindow } from '../wake/planeWindow.ts';
import type { WakePlaneWindow } from '../wake/types.ts';

export function analyseField(field: FieldResult, c: Campaign, inputs: WakeInputs = loadWakeInputs(c)): WakePlaneWindow {
  return analysePlaneWindow(field, planeWindowContext(c, inputs));
}
