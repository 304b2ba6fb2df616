/** The workspace feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useCells } from './api/useCells';
export { useFieldResults } from './api/useFieldResults';
export { CellsPanel } from './components/CellsPanel';
export { DisplayPanel, channelNames } from './components/DisplayPanel';
export { LivePreview } from './components/LivePreview';
export { AutoOutlineDialog, ImportLabelsDialog } from './components/OutlineActions';
export { PixelScatter } from './components/PixelScatter';
export { ResultsTable } from './components/ResultsTable';
export { ShortcutHelp } from './components/ShortcutHelp';
export { TOOLS, ToolBar } from './components/ToolBar';
export { Viewer, isTyping } from './components/Viewer';
export type { DisplaySettings, Tool } from './components/Viewer';
export { initialOutlineState, outlineReducer } from './lib/outlineState';
export { useOutlineSync } from './lib/useOutlineSync';
export { useScatter } from './lib/useScatter';
