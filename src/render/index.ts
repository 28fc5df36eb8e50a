/** Images, plots and the report: the public entry points (re-exports only). */
export { scalarMapSvg, type ScalarMapOptions } from './scalarMap.ts';
export { linePlotSvg, type PlotOptions, type PlotSeries } from './linePlot.ts';
export { writeSvgAndPng, svgToPng } from './write.ts';
export { writeFigure, type FigureOptions } from './figure.ts';
export { renderPlaneImages, renderGeometryMaps, inflowSvg } from './planeImages.ts';
export { renderSummaryPlots, summaryFigures } from './summaryPlots.ts';
export { renderRun, type RenderRunOptions } from './renderRun.ts';
export { reportHtml, writeReport, CAUTIONS, type ReportExtras, type ReportTable } from './report.ts';
export { wakeReportTables } from './reportTables.ts';
export { esc } from './escape.ts';
