/** The outbox feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { outboxQueryKey, useOutbox } from './api/useOutbox';
export { OutboxList } from './components/OutboxList';
export { OutboxMessageView } from './components/OutboxMessageView';
