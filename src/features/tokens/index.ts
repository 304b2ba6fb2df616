/** The API tokens feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { ApiTokensSection } from './components/ApiTokensSection';
