/** Comparison statistics (pure TypeScript; runs in the browser and on the server). */
export * from './descriptive';
export * from './distributions';
export * from './hypothesis';
export * from './fisher';
export * from './bootstrap';
export * from './histogram';
export * from './ranks';
