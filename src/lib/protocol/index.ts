export * from './frame';
export * from './messages';
export * from './safe-text';
