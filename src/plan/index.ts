/** The campaign planner: trust maps, probe volumes, pointing tables and layout search. Re-exports only. */
export { planCampaign, type PlanResult, type PlanSummary, type PlanePlanSummary } from './planCampaign.ts';
export { writePlanOutputs, cellTableCsv, pointingCsv, layoutCsv } from './writeOutputs.ts';
export { writePlanImages, trustMapGrid } from './images.ts';
export { resolvePlanSettings, meanDirection, type PlanOptions, type PlanSettings } from './settings.ts';
export { planSchema, type PlanInput } from './schema.ts';
export { cwHalfWidth, cwRayleighRange, cwWeight, pulsedWeight, pulsedFwhm, pulseWidthParameter, probeLength, SPEED_OF_LIGHT } from '../geometry/probe.ts';
export { probeFootprint, type Footprint } from './footprint.ts';
export { beamCells, BeamFlag, HARD_BEAM_FLAGS, type BeamCells } from './beamCells.ts';
export { assessCells, passFractions, poolFractions, TrustCategory, trustCategoryName, CellReason, cellReasonNames, type CellTrust, type Fractions } from './cellTrust.ts';
export { planeGeometry, type PlaneGeometry } from './planeGeometry.ts';
export { planeTrust, type PlaneTrust } from './trustMap.ts';
export { pointingTable, type PointingTable, type PointingRow } from './pointing.ts';
export { planScanOrder, gridOrders, nearestNeighbourOrder, twoOpt, tourSlew, slewAngle, type Pointing, type ScanOrder } from './scanOrder.ts';
export { searchLayouts, scoreLayout, compareLayouts, type LayoutScore, type LayoutSearchResult } from './layoutSearch.ts';
export { candidatePositions } from './candidates.ts';
export { combinations } from './combinations.ts';
