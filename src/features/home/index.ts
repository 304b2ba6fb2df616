/** The home feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { BiologistPanel } from './components/BiologistPanel';
export { CollaboratorPanel } from './components/CollaboratorPanel';
export { ManagerPanel } from './components/ManagerPanel';
export { MicroscopistPanel } from './components/MicroscopistPanel';
export { homeSections } from './lib/sections';
