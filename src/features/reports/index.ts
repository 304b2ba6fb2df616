/** The reports feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { reportCsvUrl, sharedCsvUrl } from './api/csvUrl';
export { useReport } from './api/useReport';
export { CreateReportButton } from './components/CreateReportDialog';
export { ReportList } from './components/ReportList';
export { ReportView } from './components/ReportView';
