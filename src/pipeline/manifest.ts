/** The run manifest's types live in the low-level records module; re-exported here for older imports. */
export type * from '../records/manifest.ts';
