/** The runs feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { RunDetailPanel } from './components/RunDetailPanel';
export { RunList } from './components/RunList';
export { StartRunForm } from './components/StartRunForm';
