/** The celltable feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { CellTableView } from './components/CellTableView';
export { SourceSelect } from './components/SourceSelect';
