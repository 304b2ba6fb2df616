/** The compare feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { comparisonQueryKey, useComparison } from './api/useComparison';
export { ComparePanel } from './components/ComparePanel';
export { SuperPlot, SuperPlotLegend } from './components/SuperPlot';
