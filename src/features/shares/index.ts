/** The share feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useSharedReport } from './api/useSharedReport';
export { ShareDialog } from './components/ShareDialog';
export { ShareLinksTable } from './components/ShareLinksTable';
