/** The API reference feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { apiDocumentQueryKey, useApiDocument } from './api/useApiDocument';
export { ApiReference } from './components/ApiReference';
