/** Images, plots and the report: the public entry points (re-exports only). */
export { scalarMapSvg, type ScalarMapOptions } from './scalarMap.ts';
export { smallMultiplesSvg, type Panel, type SmallMultiplesOptions } from './smallMultiples.ts';
export { linePlotSvg, type PlotOptions, type PlotSeries } from './linePlot.ts';
export { writeSvgAndPng, svgToPng } from './write.ts';
export { writeFigure, type FigureOptions } from './figure.ts';
export { RenderQueue } from './renderQueue.ts';
export { renderPlaneImages, renderGeometryMaps, inflowSvg, planeWindowFigures, geometryFigures, type FigureSpec } from './planeImages.ts';
export { renderSummaryPlots, summaryFigures } from './summaryPlots.ts';
export { FigureCollector, renderRunFigures, planePanelsSvg, type RunFiguresInput } from './runFigures.ts';
export { ScaleCollector, ValueHistogram, type RunScales } from './runScales.ts';
export { parseWindowImages, windowSelected, describeWindowImages } from './figureSelection.ts';
export { renderRun, type RenderRunOptions } from './renderRun.ts';
export { reportHtml, writeReport, CAUTIONS, type ReportExtras, type ReportTable, type ReportCell } from './report.ts';
export { wakeReportTables } from './reportTables.ts';
export { roundToUncertainty, withUncertainty, qty } from './numbers.ts';
export { esc } from './escape.ts';
