/** Every table wakeplane writes, in the order the dictionary lists them. */
import type { Table } from '../dictionary.ts';
import { fieldTable } from './fields.ts';
import { layoutsTable, planCellsTable, pointingTable } from './plan.ts';
import { rejectedRowsTable } from './run.ts';
import { powerGainTable, turbineWakesTable, windowPowerTable } from './sites.ts';
import { nacelleGatesTable, nacelleTable } from './nacelle.ts';
import { profilerTable } from './profile.ts';
import { trackerProfilesTable, trackerTable } from './track.ts';
import { downstreamTable, ensembleTable, profilesTable, steeringTable, trackTable, wakeTable } from './wake.ts';

export { powerGainTable, turbineWakesTable, windowPowerTable };
export { nacelleGatesTable, nacelleTable, profilerTable, trackerProfilesTable, trackerTable };
export { ensembleTable, fieldTable, layoutsTable, planCellsTable, pointingTable, rejectedRowsTable, downstreamTable, profilesTable, steeringTable, trackTable, wakeTable };

export const TABLES: readonly Table[] = [
  fieldTable, wakeTable, ensembleTable, steeringTable, downstreamTable, profilesTable, trackTable, turbineWakesTable, powerGainTable, windowPowerTable, profilerTable, nacelleTable, nacelleGatesTable, trackerTable, trackerProfilesTable, rejectedRowsTable, planCellsTable, pointingTable, layoutsTable,
];
