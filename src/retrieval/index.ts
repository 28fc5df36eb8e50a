export * from './types.ts';
export * from './settings.ts';
export { retrieveWindow, type WindowRetrieval } from './retrieveWindow.ts';
export { groupSamples, type SampleGroups } from './group.ts';
export { robustFilter, type RobustResult } from './robustFilter.ts';
export { instrumentMeans, type InstrumentMeans } from './instrumentMeans.ts';
export { solve2, solve3, emptyCellSolution, type CellSolution } from './solveCell.ts';
