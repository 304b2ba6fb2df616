/** The usage feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { usageQueryKey, useUsage } from './api/useUsage';
export { UsageTable } from './components/UsageTable';
