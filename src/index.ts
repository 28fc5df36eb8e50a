/**
 * wakeplane as a library: load and validate a campaign, run it, read sample files, retrieve one window from arrays,
 * analyse a field, plan a campaign. Units SI, frames as in the README (site: east, north, up; rotor: x downstream,
 * y left looking downstream, z up). Every call is typed; the declarations ship in dist/types/.
 *
 * ```ts
 * import { loadCampaign, runCampaign, defaultStages } from 'wakeplane';
 * const campaign = loadCampaign('campaign.yaml');
 * const { manifest, runDir } = await runCampaign(campaign, { stages: defaultStages(), images: false });
 * ```
 */
export { loadCampaignFile as loadCampaign, parseCampaignText, resolveCampaign as validateCampaign, campaignJsonSchema } from './campaign/load.ts';
export type { Campaign, Instrument, PlaneSpec, Turbine, Vec3 } from './campaign/types.ts';
export { turbineById, turbineOfPlane, planeOrigin, stateTurbine } from './campaign/turbines.ts';
export type { CampaignInput } from './campaign/schema.ts';
export { runCampaign, type RunOptions, type RunResult, type RunStage, type StageContext } from './pipeline/run.ts';
export { defaultStages, wakeStage, imageStage, planStage, reportStage, loadWakeInputs } from './pipeline/stages.ts';
export { openSamples, checkSamples, sampleFormat, type SampleFormat } from './io/sampleSource.ts';
export type { SampleBatch, RejectedRow } from './io/batch.ts';
export type { SampleChunk, SampleReaderOptions } from './io/csvSamples.ts';
export { retrieveFromArrays, retrievalSetup, type SampleArraysInput, type RetrieveArraysResult } from './api/retrieveArrays.ts';
export { MaskReason, maskReasonName, type FieldResult, type WindowInfo } from './retrieval/types.ts';
export type { GridSpec } from './grid/grid.ts';
export { BUDGET_TERMS, type BudgetSettings, type FieldBudget, type FieldTurbulence } from './retrieval/budget.ts';
export type { UncertaintySummary } from './records/manifest.ts';
export { analyseField } from './api/analyseField.ts';
export { analyseWake, summariseWake, type WakeInputs } from './wake/analyse.ts';
export type { WakeAnalysis, WakePlaneWindow } from './wake/types.ts';
export { analyseSiteField, turbineViews } from './wake/siteWakes.ts';
export { analysePower, type PowerAnalysis, type PowerWindow } from './power/analyse.ts';
export { powerGain, type GainWindow, type GainResult } from './power/gain.ts';
export { powerStage } from './pipeline/powerStage.ts';
export { loadTerrain } from './io/terrainFile.ts';
export { flatTerrain, GridTerrain, type Terrain } from './geometry/terrain.ts';
export { planCampaign, type PlanResult, type PlanSummary } from './plan/index.ts';
export { REJECT_REASONS, type RejectReason, type SampleAccount } from './qc/reasons.ts';
export type { OutputRecord, RunManifest } from './records/manifest.ts';
export { TABLES as OUTPUT_TABLES } from './records/tables/index.ts';
export { header as columnHeader, type Column, type Table } from './records/dictionary.ts';
export { InputError, ConfigError, OptionError, GeometryError } from './errors.ts';
export { VERSION } from './version.ts';
