export * from './types.ts';
export * from './settings.ts';
export { retrieveWindow, retrieveStats, accumulateSamples, cellOffsets, keyCountOf, type WindowRetrieval } from './retrieveWindow.ts';
export { robustFilter, type RobustResult } from './robustFilter.ts';
export { emptyCellStats, mergeCellStats, instrumentMeans, type CellStats, type InstrumentMeans } from './cellStats.ts';
export { solve2, solve3, emptyCellSolution, type CellSolution } from './solveCell.ts';
